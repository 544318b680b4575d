import { randomBytes } from "node:crypto";
import { CreateBucketCommand, GetObjectCommand, HeadBucketCommand, PutObjectCommand, S3Client } from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { env } from "~/env.server";

/**
 * Field photos (work-order close-outs, inspections) in object storage. Small and self-contained
 * so field work does not wait for the import's storage module; the two can merge later.
 */
let clients: { internal: S3Client; public: S3Client } | undefined;

function make(endpoint: string): S3Client {
  const e = env();
  return new S3Client({
    endpoint,
    forcePathStyle: true,
    region: e.S3_REGION,
    credentials: { accessKeyId: e.S3_ACCESS_KEY_ID, secretAccessKey: e.S3_SECRET_ACCESS_KEY },
    // The local fake stores aws-chunked framing verbatim: no streaming checksums.
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
}

function s3() {
  clients ??= { internal: make(env().S3_ENDPOINT), public: make(env().S3_PUBLIC_ENDPOINT ?? env().S3_ENDPOINT) };
  return clients;
}

let bucketReady: Promise<void> | undefined;
function ensureBucket(): Promise<void> {
  bucketReady ??= (async () => {
    try {
      await s3().internal.send(new HeadBucketCommand({ Bucket: env().S3_BUCKET }));
    } catch {
      await s3().internal.send(new CreateBucketCommand({ Bucket: env().S3_BUCKET }));
    }
  })().catch((e: unknown) => {
    bucketReady = undefined;
    throw e;
  });
  return bucketReady;
}

export const MAX_PHOTO_BYTES = 15 * 1024 * 1024;

/** Check and store pictures under `prefix`; answers their keys, or the first problem in plain words. */
export async function storePhotos(prefix: string, files: readonly File[], max = 8): Promise<{ keys: string[]; error?: string }> {
  const real = files.filter((f) => f.size > 0);
  if (real.length > max) return { keys: [], error: `At most ${max} photos at a time.` };
  for (const f of real) {
    if (!f.type.startsWith("image/")) return { keys: [], error: `${f.name} is not a picture.` };
    if (f.size > MAX_PHOTO_BYTES) return { keys: [], error: `${f.name} is larger than 15 MB.` };
  }
  if (real.length) await ensureBucket();
  const keys: string[] = [];
  for (const f of real) {
    const safe = (f.name || "photo.jpg").replace(/[^A-Za-z0-9._-]+/g, "_").replace(/^\.+/, "").slice(-80) || "photo.jpg";
    const key = `${prefix}/${randomBytes(16).toString("base64url")}/${safe}`;
    await s3().internal.send(new PutObjectCommand({ Bucket: env().S3_BUCKET, Key: key, Body: Buffer.from(await f.arrayBuffer()), ContentLength: f.size, ContentType: f.type }));
    keys.push(key);
  }
  return { keys };
}

/** A short-lived URL the browser shows the photo from. */
export async function photoUrl(key: string, expiresInSeconds = 3600): Promise<string> {
  return getSignedUrl(s3().public, new GetObjectCommand({ Bucket: env().S3_BUCKET, Key: key }), { expiresIn: expiresInSeconds });
}
