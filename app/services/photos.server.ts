import { randomBytes } from "node:crypto";
import { putObject } from "./storage.server";

/** Field photos (work-order close-outs, inspections), kept in the same object store as uploads. */
export const MAX_PHOTO_BYTES = 15 * 1024 * 1024;

/** The picture kinds a photo may be: raster images only, told by their first bytes, never by the browser's word. */
export const PHOTO_KINDS = {
  jpeg: { type: "image/jpeg", ext: "jpg" },
  png: { type: "image/png", ext: "png" },
  webp: { type: "image/webp", ext: "webp" },
} as const;
export type PhotoKind = keyof typeof PHOTO_KINDS;

/** JPEG (FF D8 FF), PNG (its 8-byte signature) or WebP (RIFF….WEBP); null for anything else (SVG, HTML, PDF…). */
export function photoKind(head: Uint8Array): PhotoKind | null {
  const b = head;
  if (b.length >= 3 && b[0] === 0xff && b[1] === 0xd8 && b[2] === 0xff) return "jpeg";
  if (b.length >= 8 && [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a].every((v, i) => b[i] === v)) return "png";
  const ascii = (from: number, to: number) => String.fromCharCode(...b.subarray(from, to));
  if (b.length >= 12 && ascii(0, 4) === "RIFF" && ascii(8, 12) === "WEBP") return "webp";
  return null;
}

/** Check and store pictures under `prefix`; answers their keys, or the first problem in plain words. */
export async function storePhotos(prefix: string, files: readonly File[], max = 8): Promise<{ keys: string[]; error?: string }> {
  const real = files.filter((f) => f.size > 0);
  if (real.length > max) return { keys: [], error: `At most ${max} photos at a time.` };
  const checked: { file: File; bytes: Buffer; kind: PhotoKind }[] = [];
  for (const f of real) {
    if (f.size > MAX_PHOTO_BYTES) return { keys: [], error: `${f.name} is larger than 15 MB.` };
    const bytes = Buffer.from(await f.arrayBuffer());
    const kind = photoKind(bytes);
    if (!kind) return { keys: [], error: `${f.name} is not a JPEG, PNG or WebP photo. Nothing was added.` };
    checked.push({ file: f, bytes, kind });
  }
  const keys: string[] = [];
  for (const { file, bytes, kind } of checked) {
    // The stored name ends in the detected kind's extension, whatever the browser called it.
    const base = (file.name || "photo").replace(/\.[^.]*$/, "").replace(/[^A-Za-z0-9_-]+/g, "_").slice(-80) || "photo";
    const key = `${prefix}/${randomBytes(16).toString("base64url")}/${base}.${PHOTO_KINDS[kind].ext}`;
    await putObject(key, bytes, bytes.length, PHOTO_KINDS[kind].type);
    keys.push(key);
  }
  return { keys };
}

/**
 * Where the browser shows the photo from: the app's own photo route (which checks access, the
 * bytes and sends it as an attachment with a fixed type), not the object store.
 */
export function photoUrl(key: string): string {
  const m = /^sites\/([0-9a-f-]{36})\/(.+)$/.exec(key);
  if (!m) return "";
  return `/sites/${m[1]}/photos/${m[2]!.split("/").map(encodeURIComponent).join("/")}`;
}
