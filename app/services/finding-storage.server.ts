/**
 * Object storage for flight pictures. A small stand-in with the same calls as
 * app/services/storage.server.ts (written alongside for the readings import); switch the imports
 * to it once it is committed, then delete this file.
 */
import { randomBytes } from "node:crypto";
import { CreateBucketCommand, GetObjectCommand, HeadBucketCommand, HeadObjectCommand, PutObjectCommand, S3Client } from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { env } from "~/env.server";

declare global {
  var __sunsiftFindingS3: { internal: S3Client; public: S3Client } | undefined;
}

function client(endpoint: string): S3Client {
  const e = env();
  return new S3Client({
    endpoint,
    forcePathStyle: true,
    region: e.S3_REGION,
    credentials: { accessKeyId: e.S3_ACCESS_KEY_ID, secretAccessKey: e.S3_SECRET_ACCESS_KEY },
    // Streamed bodies would otherwise be sent with aws-chunked framing, which the fake stores verbatim.
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
}

function clients() {
  const e = env();
  globalThis.__sunsiftFindingS3 ??= { internal: client(e.S3_ENDPOINT), public: client(e.S3_PUBLIC_ENDPOINT ?? e.S3_ENDPOINT) };
  return globalThis.__sunsiftFindingS3;
}

const bucket = () => env().S3_BUCKET;
let ready: Promise<void> | undefined;

function ensureBucket(): Promise<void> {
  ready ??= (async () => {
    try {
      await clients().internal.send(new HeadBucketCommand({ Bucket: bucket() }));
    } catch {
      await clients().internal.send(new CreateBucketCommand({ Bucket: bucket() }));
    }
  })().catch((e: unknown) => {
    ready = undefined;
    throw e;
  });
  return ready;
}

/** A key nobody can guess, keeping the file name for people. */
export function newObjectKey(prefix: string, fileName: string): string {
  const safe = fileName.replace(/[^A-Za-z0-9._-]+/g, "_").replace(/^\.+/, "").slice(-120) || "upload";
  return `${prefix}/${randomBytes(16).toString("base64url")}/${safe}`;
}

export async function presignPut(key: string, expiresInSeconds = 900): Promise<string> {
  await ensureBucket();
  return getSignedUrl(clients().public, new PutObjectCommand({ Bucket: bucket(), Key: key }), { expiresIn: expiresInSeconds });
}

export async function presignGet(key: string, _fileName: string, expiresInSeconds = 300): Promise<string> {
  return getSignedUrl(clients().public, new GetObjectCommand({ Bucket: bucket(), Key: key }), { expiresIn: expiresInSeconds });
}

export async function objectSize(key: string): Promise<number | null> {
  try {
    const head = await clients().internal.send(new HeadObjectCommand({ Bucket: bucket(), Key: key }));
    return head.ContentLength ?? 0;
  } catch {
    return null;
  }
}

export async function putObject(key: string, body: Buffer, contentLength: number, contentType: string): Promise<void> {
  await ensureBucket();
  await clients().internal.send(new PutObjectCommand({ Bucket: bucket(), Key: key, Body: body, ContentLength: contentLength, ContentType: contentType }));
}
