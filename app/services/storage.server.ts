import { randomBytes } from "node:crypto";
import type { Readable } from "node:stream";
import {
  CreateBucketCommand,
  DeleteObjectCommand,
  GetObjectCommand,
  HeadBucketCommand,
  HeadObjectCommand,
  PutObjectCommand,
  S3Client,
} from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { env } from "~/env.server";

/**
 * Object storage through the S3 SDK (a local S3-compatible fake in development and tests).
 * Uploads go straight from the browser with presigned PUTs; the stored object is the record of
 * what arrived.
 */

declare global {
  var __sunsiftS3: { internal: S3Client; public: S3Client } | undefined;
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
  if (!globalThis.__sunsiftS3) {
    const e = env();
    globalThis.__sunsiftS3 = { internal: client(e.S3_ENDPOINT), public: client(e.S3_PUBLIC_ENDPOINT ?? e.S3_ENDPOINT) };
  }
  return globalThis.__sunsiftS3;
}

export function s3(): S3Client {
  return clients().internal;
}

export function bucket(): string {
  return env().S3_BUCKET;
}

let bucketReady: Promise<void> | undefined;

/** Creates the bucket when missing (the fake starts empty unless configured). */
export function ensureBucket(): Promise<void> {
  bucketReady ??= (async () => {
    try {
      await s3().send(new HeadBucketCommand({ Bucket: bucket() }));
    } catch {
      await s3().send(new CreateBucketCommand({ Bucket: bucket() }));
    }
  })().catch((e: unknown) => {
    bucketReady = undefined;
    throw e;
  });
  return bucketReady;
}

/** A key nobody can guess: a random part of 128 bits, and the file name kept for people. */
export function newObjectKey(prefix: string, fileName: string): string {
  const safe = fileName.replace(/[^A-Za-z0-9._-]+/g, "_").replace(/^\.+/, "").slice(-120) || "upload";
  return `${prefix}/${randomBytes(16).toString("base64url")}/${safe}`;
}

/** A URL the browser may PUT the file to, for a few minutes. */
export async function presignPut(key: string, expiresInSeconds = 900): Promise<string> {
  await ensureBucket();
  return getSignedUrl(clients().public, new PutObjectCommand({ Bucket: bucket(), Key: key }), { expiresIn: expiresInSeconds });
}

/** A URL the browser may GET the object from, downloaded under `fileName`. */
export async function presignGet(key: string, fileName: string, expiresInSeconds = 300): Promise<string> {
  const disposition = `attachment; filename="${fileName.replace(/[^A-Za-z0-9._-]+/g, "_")}"`;
  return getSignedUrl(clients().public, new GetObjectCommand({ Bucket: bucket(), Key: key, ResponseContentDisposition: disposition }), {
    expiresIn: expiresInSeconds,
  });
}

/** A URL the browser may show the object from (a photo in a page), for `expiresInSeconds`. */
export async function presignView(key: string, expiresInSeconds = 3600): Promise<string> {
  return getSignedUrl(clients().public, new GetObjectCommand({ Bucket: bucket(), Key: key }), { expiresIn: expiresInSeconds });
}

/** Size of a stored object, or null when it does not exist. */
export async function objectSize(key: string): Promise<number | null> {
  try {
    const head = await s3().send(new HeadObjectCommand({ Bucket: bucket(), Key: key }));
    return head.ContentLength ?? 0;
  } catch {
    return null;
  }
}

export async function putObject(key: string, body: Readable | Buffer | string, contentLength: number, contentType = "text/csv"): Promise<void> {
  await ensureBucket();
  await s3().send(new PutObjectCommand({ Bucket: bucket(), Key: key, Body: body, ContentLength: contentLength, ContentType: contentType }));
}

/** Removes an object (a refused upload); a missing one is no error. */
export async function deleteObject(key: string): Promise<void> {
  await s3().send(new DeleteObjectCommand({ Bucket: bucket(), Key: key }));
}

/** The object as a Node stream; `range` like "bytes=0-262143". */
export async function getObjectStream(key: string, range?: string): Promise<Readable> {
  const res = await s3().send(new GetObjectCommand({ Bucket: bucket(), Key: key, ...(range ? { Range: range } : {}) }));
  if (!res.Body) throw new Error(`Object ${key} has no body`);
  return res.Body as Readable;
}

/** The first `bytes` bytes of an object (the whole object when it is shorter). */
export async function readHead(key: string, bytes: number): Promise<Buffer> {
  const body = await getObjectStream(key, `bytes=0-${bytes - 1}`);
  const chunks: Buffer[] = [];
  let total = 0;
  for await (const c of body) {
    const b = c as Buffer;
    chunks.push(b);
    total += b.length;
    if (total >= bytes) break;
  }
  body.destroy();
  return Buffer.concat(chunks).subarray(0, bytes);
}

/** Closes the object-store clients (their keep-alive sockets would keep a script alive). */
export function closeStorage(): void {
  const c = globalThis.__sunsiftS3;
  globalThis.__sunsiftS3 = undefined;
  c?.internal.destroy();
  c?.public.destroy();
}
