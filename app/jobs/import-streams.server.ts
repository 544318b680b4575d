/**
 * The streams an import runs through (app/jobs/import-readings.server.ts): the byte count and UTF-8
 * check in front of the CSV parser, the binary COPY writer of staged rows, and the reject report.
 */
import { createReadStream, createWriteStream, type WriteStream } from "node:fs";
import { mkdtemp, rm, stat } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { Transform, type TransformCallback } from "node:stream";
import { createLineLengthGuard, firstInvalidUtf8, type Reject } from "~/domain/import";
import { formatBytes } from "~/models/imports.server";
import { newObjectKey, putObject } from "~/services/storage.server";
import { csvCell } from "~/lib/csv-safe";

/** The longest line a file may have, in characters: a longer one is a runaway, and the file is refused. */
export const MAX_LINE_LENGTH = 1_000_000;
/** How many rejected lines the import row keeps for the screen (the report keeps them all). */
const FIRST_ERRORS = 20;

/** A file refused as a whole (not text, too large, a runaway line…): its message is for people. */
export class Refusal extends Error {}

/** Writes staged rows in PostgreSQL's binary COPY format: no text parsing on the server side. */
export class BinaryRows {
  private static readonly ROW = 2 + 8 + 6 + 12 + 8;
  private static readonly PG_EPOCH_MS = Date.UTC(2000, 0, 1);
  private buf = Buffer.allocUnsafe(1 << 18);
  private at = 0;

  constructor() {
    // Signature, flags, header extension length.
    Buffer.from("PGCOPY\n\xff\r\n\0", "latin1").copy(this.buf, 0);
    this.buf.writeInt32BE(0, 11);
    this.buf.writeInt32BE(0, 15);
    this.at = 19;
  }

  /** Returns a full buffer to send, or null. */
  add(deviceId: number, metric: number, tsMs: number, value: number): Buffer | null {
    let out: Buffer | null = null;
    if (this.at + BinaryRows.ROW > this.buf.length) out = this.take();
    const b = this.buf;
    let o = this.at;
    o = b.writeInt16BE(4, o);
    o = b.writeInt32BE(4, o);
    o = b.writeInt32BE(deviceId, o);
    o = b.writeInt32BE(2, o);
    o = b.writeInt16BE(metric, o);
    o = b.writeInt32BE(8, o);
    // Microseconds since 2000-01-01 UTC as a signed 64-bit integer, written as two halves.
    const us = (tsMs - BinaryRows.PG_EPOCH_MS) * 1000;
    const hi = Math.floor(us / 4294967296);
    o = b.writeInt32BE(hi, o);
    o = b.writeUInt32BE(us - hi * 4294967296, o);
    o = b.writeInt32BE(4, o);
    o = b.writeFloatBE(value, o);
    this.at = o;
    return out;
  }

  take(): Buffer {
    const out = this.buf.subarray(0, this.at);
    this.buf = Buffer.allocUnsafe(1 << 18);
    this.at = 0;
    return out;
  }

  end(): Buffer {
    if (this.at + 2 > this.buf.length) throw new Error("unreachable");
    this.at = this.buf.writeInt16BE(-1, this.at);
    return this.take();
  }
}

/** The reject report: a CSV in a temporary file, stored next to the upload when it has lines. */
export class RejectReport {
  count = 0;
  first: { line: number; column?: string; value?: string; reason: string }[] = [];
  private dir: string | null = null;
  private out: WriteStream | null = null;
  private pending = "";

  async open(): Promise<void> {
    this.dir = await mkdtemp(join(tmpdir(), "sunsift-rejects-"));
    this.out = createWriteStream(join(this.dir, "rejects.csv"));
    this.pending = "line,column,value,reason\n";
  }

  add(r: Reject): void {
    this.count++;
    if (this.first.length < FIRST_ERRORS)
      this.first.push({ line: r.line, ...(r.column !== undefined ? { column: r.column } : {}), ...(r.value !== undefined ? { value: r.value.slice(0, 200) } : {}), reason: r.reason });
    this.pending += `${r.line},${csvCell(r.column)},${csvCell(r.value?.slice(0, 1000))},${csvCell(r.reason)}\n`;
  }

  /** Hands buffered lines to the file; false when the file wants a pause. */
  flush(): boolean {
    if (!this.pending || !this.out) return true;
    const ok = this.out.write(this.pending);
    this.pending = "";
    return ok;
  }

  drained(): Promise<void> {
    return new Promise((r) => (this.out && this.out.writableNeedDrain ? this.out.once("drain", () => r()) : r()));
  }

  async store(prefix: string): Promise<string | null> {
    if (!this.out || !this.dir) return null;
    this.flush();
    await new Promise<void>((resolve, reject) => this.out!.end((e?: Error | null) => (e ? reject(e) : resolve())));
    if (this.count === 0) return null;
    const path = join(this.dir, "rejects.csv");
    const key = newObjectKey(prefix, "rejects.csv");
    await putObject(key, createReadStream(path), (await stat(path)).size, "text/csv; charset=utf-8");
    return key;
  }

  async close(): Promise<void> {
    this.out?.destroy();
    if (this.dir) await rm(this.dir, { recursive: true, force: true });
  }
}

/** Counts bytes, decodes UTF-8 strictly and watches line lengths, before the CSV parser. */
export class TextGate extends Transform {
  bytes = 0;
  private readonly decoder = new TextDecoder("utf-8", { fatal: true });
  private readonly guard = createLineLengthGuard(MAX_LINE_LENGTH);
  private lines = 1;

  constructor(private readonly maxBytes: number) {
    super({ readableObjectMode: false, decodeStrings: true, encoding: "utf8" });
  }

  override _transform(chunk: Buffer, _enc: BufferEncoding, done: TransformCallback): void {
    const at = this.bytes;
    this.bytes += chunk.length;
    if (this.bytes > this.maxBytes)
      return done(new Refusal(`The file is larger than the limit of ${formatBytes(this.maxBytes)}. Nothing was loaded; upload a smaller file.`));
    let text: string;
    try {
      text = this.decoder.decode(chunk, { stream: true });
    } catch {
      // Name the line and byte: the first invalid byte of this chunk (or its start, when a
      // character begun in the previous chunk is what breaks).
      const bad = Math.max(0, firstInvalidUtf8(chunk));
      let line = this.lines;
      for (let i = chunk.indexOf(10); i >= 0 && i < bad; i = chunk.indexOf(10, i + 1)) line++;
      return done(new Refusal(`Line ${line} is not valid UTF-8 text (byte ${(at + bad + 1).toLocaleString("en")} of the file): export it as UTF-8 CSV. Nothing was loaded.`));
    }
    if (text.indexOf("\0") >= 0) return done(new Refusal(`The file is not text: it contains a NUL byte near line ${this.lines}. Nothing was loaded.`));
    const long = this.guard.push(text);
    if (long) return done(new Refusal(`${long.reason} Nothing was loaded.`));
    this.lines = 1 + this.guard.lineFeeds;
    done(null, text);
  }

  override _flush(done: TransformCallback): void {
    try {
      const rest = this.decoder.decode();
      done(null, rest || undefined);
    } catch {
      done(new Refusal("The file ends in the middle of a UTF-8 character: it is not valid text. Nothing was loaded."));
    }
  }
}
