import { SMTPServer } from "smtp-server";

export interface Captured {
  to: string[];
  raw: string;
}

/**
 * A real SMTP server on the port the test app sends to (scripts/test.sh leaves it free),
 * collecting what arrives so tests can read the e-mails the product sent.
 */
export async function captureSmtp(port = Number(process.env.SMTP_PORT)) {
  const messages: Captured[] = [];
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS", "AUTH"],
    logger: false,
    onData(stream, session, cb) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("end", () => {
        messages.push({ to: session.envelope.rcptTo.map((r) => r.address), raw: Buffer.concat(chunks).toString("utf8") });
        cb();
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(port, "127.0.0.1", () => resolve());
  });
  return {
    messages,
    /** Wait for a message to this address whose raw text matches. */
    async waitFor(to: string, match: RegExp, timeoutMs = 15_000): Promise<string> {
      const until = Date.now() + timeoutMs;
      while (Date.now() < until) {
        const m = messages.find((x) => x.to.includes(to) && match.test(decodeQp(x.raw)));
        if (m) return decodeQp(m.raw);
        await new Promise((r) => setTimeout(r, 100));
      }
      throw new Error(`no e-mail to ${to} matching ${match} within ${timeoutMs} ms (got ${messages.length})`);
    },
    close: () => new Promise<void>((r) => server.close(() => r())),
  };
}

/** Undo quoted-printable soft breaks and escapes, as nodemailer writes long lines. */
export function decodeQp(raw: string): string {
  return raw.replace(/=\r?\n/g, "").replace(/=([0-9A-F]{2})/g, (_, h: string) => String.fromCharCode(parseInt(h, 16)));
}
