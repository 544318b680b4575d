/**
 * Local stand-ins for the hosted services: an S3-compatible object store (s3rver) and an SMTP
 * server that accepts every message. The product sends through the real SDKs to these.
 */
import S3rver from "s3rver";
import { SMTPServer } from "smtp-server";
import { mkdirSync } from "node:fs";
import { fileURLToPath } from "node:url";

export interface Fakes {
  s3Port: number;
  smtpPort: number;
  received: { from: string; to: string[]; raw: string }[];
  close(): Promise<void>;
}

export async function startFakes(opts: { s3Port: number; smtpPort: number | null; s3Dir: string; bucket: string; quiet?: boolean }): Promise<Fakes> {
  mkdirSync(opts.s3Dir, { recursive: true });
  const s3 = new S3rver({
    port: opts.s3Port,
    address: "127.0.0.1",
    directory: opts.s3Dir,
    silent: true,
    configureBuckets: [{ name: opts.bucket, configs: [CORS] }],
  });
  await s3.run();
  const received: Fakes["received"] = [];
  const smtp = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS", "AUTH"],
    logger: false,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("end", () => {
        received.push({
          from: session.envelope.mailFrom ? session.envelope.mailFrom.address : "",
          to: session.envelope.rcptTo.map((r) => r.address),
          raw: Buffer.concat(chunks).toString("utf8"),
        });
        if (!opts.quiet) console.log(`[smtp] message to ${session.envelope.rcptTo.map((r) => r.address).join(", ")}`);
        callback();
      });
    },
  });
  if (opts.smtpPort !== null) {
    const port = opts.smtpPort;
    await new Promise<void>((resolve, reject) => {
      smtp.once("error", reject);
      smtp.listen(port, "127.0.0.1", () => resolve());
    });
  }
  return {
    s3Port: opts.s3Port,
    smtpPort: opts.smtpPort ?? 0,
    received,
    async close() {
      if (opts.smtpPort !== null) await new Promise<void>((r) => smtp.close(() => r()));
      await s3.close();
    },
  };
}

// Browsers upload straight to the store with presigned PUTs, so it must answer CORS.
const CORS = `<CORSConfiguration><CORSRule><AllowedOrigin>*</AllowedOrigin><AllowedMethod>GET</AllowedMethod><AllowedMethod>PUT</AllowedMethod><AllowedMethod>HEAD</AllowedMethod><AllowedHeader>*</AllowedHeader><ExposeHeader>ETag</ExposeHeader><MaxAgeSeconds>3000</MaxAgeSeconds></CORSRule></CORSConfiguration>`;

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const s3Port = Number(process.env.S3_PORT ?? 4569);
  const smtpPort = Number(process.env.SMTP_PORT ?? 2525);
  const root = fileURLToPath(new URL("..", import.meta.url));
  startFakes({ s3Port, smtpPort: process.argv.includes("--s3-only") ? null : smtpPort, s3Dir: process.env.S3_DIR ?? `${root}.data/s3`, bucket: process.env.S3_BUCKET ?? "sunsift-uploads" }).then(
    (f) => {
      console.log(`fakes: object store on 127.0.0.1:${f.s3Port}` + (f.smtpPort ? `, SMTP on 127.0.0.1:${f.smtpPort}` : ""));
      const stop = () => f.close().then(() => process.exit(0));
      process.on("SIGINT", stop);
      process.on("SIGTERM", stop);
    },
    (e: unknown) => {
      console.error("Could not start the local fakes:", e instanceof Error ? e.message : e);
      process.exit(1);
    },
  );
}
