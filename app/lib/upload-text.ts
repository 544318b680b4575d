import { detectFileProblems, firstInvalidUtf8 } from "~/domain/import/file-checks";

/**
 * The text of an uploaded CSV (layout, findings), decoded strictly: a file that is not UTF-8
 * text is refused with the reason, never read with replacement characters (a Latin-1 "é"
 * would otherwise become "�" in device names and load silently).
 */
export function decodeUploadText(bytes: Uint8Array): { ok: true; text: string } | { ok: false; reason: string } {
  const problem = detectFileProblems(bytes);
  if (problem && problem !== "The file is empty.") return { ok: false, reason: problem };
  const nul = bytes.indexOf(0);
  if (nul >= 0) return { ok: false, reason: `The file is not text: it contains a NUL byte at byte ${nul + 1}.` };
  const bad = firstInvalidUtf8(bytes);
  // A sequence cut off by the end of the file is invalid too (the sniffer forgives it in a sample).
  try {
    const text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
    if (bad < 0) return { ok: true, text };
  } catch {
    // reported below
  }
  const at = bad >= 0 ? bad : bytes.length - 1;
  let line = 1;
  for (let i = 0; i < at; i++) if (bytes[i] === 10) line++;
  return { ok: false, reason: `Line ${line} is not valid UTF-8 text (byte ${(at + 1).toLocaleString("en")} of the file): export it as UTF-8 CSV; it may be Latin-1 or Windows-1252.` };
}
