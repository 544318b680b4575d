import PgBoss from "pg-boss";
import { env } from "~/env.server";

/** Job names; each has a handler registered by the worker (app/jobs/worker.server.ts). */
export const QUEUES = ["mail-retry", "import-readings", "analysis", "password-reset-mail"] as const;
export type QueueName = (typeof QUEUES)[number];

declare global {
  var __sunsiftBoss: Promise<PgBoss> | undefined;
}

/** One pg-boss per process; the web process only sends, the worker also works. */
export function boss(): Promise<PgBoss> {
  if (!globalThis.__sunsiftBoss) {
    globalThis.__sunsiftBoss = (async () => {
      const b = new PgBoss({ connectionString: env().DATABASE_URL, max: 5 });
      b.on("error", (e) => console.warn("job queue:", e.message));
      await b.start();
      // A web process only sends jobs: stop pg-boss on SIGTERM so the server can exit (its timers
      // would keep it alive); the worker stops its own, gracefully.
      if (!process.argv.some((a) => a.endsWith("worker.ts"))) process.once("SIGTERM", () => void b.stop({ graceful: false }).catch(() => undefined));
      for (const q of QUEUES) await b.createQueue(q);
      return b;
    })();
  }
  return globalThis.__sunsiftBoss;
}

export async function enqueue(name: QueueName, data: object, options: PgBoss.SendOptions = {}): Promise<string> {
  const id = await (await boss()).send(name, data, { retryLimit: 3, retryDelay: 5, ...options });
  if (!id) throw new Error(`The ${name} job was not queued`);
  return id;
}

/** Stops this process's pg-boss if it was started (its timers would keep a script alive). */
export async function closeQueue(): Promise<void> {
  const b = globalThis.__sunsiftBoss;
  globalThis.__sunsiftBoss = undefined;
  if (b) await (await b).stop({ graceful: false, wait: true });
}
