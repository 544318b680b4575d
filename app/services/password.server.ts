import { randomBytes, scrypt as scryptCb, timingSafeEqual, createHash } from "node:crypto";
import { promisify } from "node:util";

type ScryptParams = { N: number; r: number; p: number; maxmem?: number };
const scrypt = promisify(scryptCb) as (pw: string, salt: Buffer, keylen: number, opts: ScryptParams) => Promise<Buffer>;

/**
 * scrypt at the OWASP Password Storage Cheat Sheet's first choice (N=2^17, r=8, p=1: 128 MiB and
 * roughly half a second of one core here). Older hashes carry their own parameters and still verify;
 * `needsRehash` tells the sign-in to store a fresh hash at these.
 */
export const PARAMS = { N: 2 ** 17, r: 8, p: 1 } as const;
/** Memory scrypt may use: 128·N·r·p bytes, plus room (Node's default limit is 32 MiB). */
const maxmemFor = (N: number, r: number, p: number) => 128 * N * r * p + 32 * 1024 * 1024;
/** Stored parameters above these are refused rather than computed (a hash is ours; this caps memory). */
const MAX_N = 2 ** 20;

/** scrypt with a random salt; the parameters travel in the string so they can be raised later. */
export async function hashPassword(password: string): Promise<string> {
  const salt = randomBytes(16);
  const key = await scrypt(password, salt, 64, { ...PARAMS, maxmem: maxmemFor(PARAMS.N, PARAMS.r, PARAMS.p) });
  return `scrypt$${PARAMS.N}$${PARAMS.r}$${PARAMS.p}$${salt.toString("base64")}$${key.toString("base64")}`;
}

function parse(stored: string) {
  const [alg, n, r, p, saltB64, keyB64] = stored.split("$");
  const N = Number(n), R = Number(r), P = Number(p);
  if (alg !== "scrypt" || !saltB64 || !keyB64 || !Number.isInteger(N) || !Number.isInteger(R) || !Number.isInteger(P)) return null;
  if (N < 2 || N > MAX_N || R < 1 || R > 32 || P < 1 || P > 16) return null;
  return { N, r: R, p: P, salt: Buffer.from(saltB64, "base64"), key: Buffer.from(keyB64, "base64") };
}

export async function verifyPassword(password: string, stored: string | null): Promise<boolean> {
  if (!stored) return false;
  const h = parse(stored);
  if (!h || h.key.length === 0) return false;
  const key = await scrypt(password, h.salt, h.key.length, { N: h.N, r: h.r, p: h.p, maxmem: maxmemFor(h.N, h.r, h.p) });
  return timingSafeEqual(key, h.key);
}

/** A stored hash made with weaker parameters than today's (re-hash it at the next sign-in). */
export function needsRehash(stored: string | null): boolean {
  if (!stored) return false;
  const h = parse(stored);
  return !!h && (h.N < PARAMS.N || h.r < PARAMS.r || h.p < PARAMS.p);
}

/** A random token for links and API access, and the hash we store instead of it. */
export function newToken(prefix = ""): string {
  return prefix + randomBytes(24).toString("base64url");
}

export function sha256(value: string): string {
  return createHash("sha256").update(value).digest("hex");
}
