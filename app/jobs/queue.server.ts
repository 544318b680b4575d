import PgBoss from "pg-boss";
import { env } from "~/env.server";

/** Job names; each has a handler registered by the worker (app/jobs/worker.server.ts). */
export const QUEUES = ["mail-retry", "import-readings", "analysis", "password-reset-mail"] as const;
export type QueueName = (typeof QUEUES)[number];

declare global {
  var __sunsiftBoss: Promise<PgBoss> | undefined;
}

/** How long a failed start is remembered before the next call tries again. */
export const QUEUE_RETRY_MS = 2000;
let lastFailedStart = 0;

/**
 * One pg-boss per process; the web process only sends, the worker also works. A start that
 * fails (PostgreSQL down, a bad connection) is not kept: the next call tries again, after a
 * short backoff so that a burst of requests does not hammer the database.
 */
export function boss(): Promise<PgBoss> {
  if (!globalThis.__sunsiftBoss) {
    const wait = Math.max(0, lastFailedStart + QUEUE_RETRY_MS - Date.now());
    const starting = (async () => {
      if (wait) await new Promise((r) => setTimeout(r, wait));
      const b = new PgBoss({ connectionString: env().DATABASE_URL, max: 5 });
      b.on("error", (e) => console.warn("job queue:", e.message));
      try {
        await b.start();
        for (const q of QUEUES) await b.createQueue(q);
      } catch (e) {
        await b.stop({ graceful: false, wait: true }).catch(() => undefined);
        throw e;
      }
      // A web process only sends jobs: stop pg-boss on SIGTERM so the server can exit (its timers
      // would keep it alive); the worker stops its own, gracefully.
      if (!process.argv.some((a) => a.endsWith("worker.ts"))) process.once("SIGTERM", () => void b.stop({ graceful: false }).catch(() => undefined));
      return b;
    })();
    globalThis.__sunsiftBoss = starting;
    starting.catch(() => {
      lastFailedStart = Date.now();
      if (globalThis.__sunsiftBoss === starting) globalThis.__sunsiftBoss = undefined;
    });
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
