import { randomBytes } from "node:crypto";
import { presignView, putObject } from "./storage.server";

/** Field photos (work-order close-outs, inspections), kept in the same object store as uploads. */
export const MAX_PHOTO_BYTES = 15 * 1024 * 1024;

/** Check and store pictures under `prefix`; answers their keys, or the first problem in plain words. */
export async function storePhotos(prefix: string, files: readonly File[], max = 8): Promise<{ keys: string[]; error?: string }> {
  const real = files.filter((f) => f.size > 0);
  if (real.length > max) return { keys: [], error: `At most ${max} photos at a time.` };
  for (const f of real) {
    if (!f.type.startsWith("image/")) return { keys: [], error: `${f.name} is not a picture.` };
    if (f.size > MAX_PHOTO_BYTES) return { keys: [], error: `${f.name} is larger than 15 MB.` };
  }
  const keys: string[] = [];
  for (const f of real) {
    const safe = (f.name || "photo.jpg").replace(/[^A-Za-z0-9._-]+/g, "_").replace(/^\.+/, "").slice(-80) || "photo.jpg";
    const key = `${prefix}/${randomBytes(16).toString("base64url")}/${safe}`;
    await putObject(key, Buffer.from(await f.arrayBuffer()), f.size, f.type);
    keys.push(key);
  }
  return { keys };
}

/** A short-lived URL the browser shows the photo from. */
export function photoUrl(key: string, expiresInSeconds = 3600): Promise<string> {
  return presignView(key, expiresInSeconds);
}
