import { boss } from "./queue.server";
import { retryQueuedEmails } from "~/services/mail.server";

type Handler = (data: unknown) => Promise<void>;
/** pg-boss fetches `batchSize` jobs, then waits `pollingIntervalSeconds` before fetching again. */
interface WorkOptions {
  batchSize: number;
  pollingIntervalSeconds?: number;
}
const handlers = new Map<string, { handler: Handler; options: WorkOptions }>();

/** Later features register their job handlers here before the worker starts (one job per fetch unless told). */
export function registerHandler(name: string, handler: Handler, options: WorkOptions = { batchSize: 1 }): void {
  handlers.set(name, { handler, options });
}

/** Whether this process works jobs of that name (a job that would never run is not queued). */
export function hasHandler(name: string): boolean {
  return handlers.has(name);
}

export async function startWorker(): Promise<() => Promise<void>> {
  const b = await boss();
  await b.work("mail-retry", async () => {
    await retryQueuedEmails();
  });
  await b.schedule("mail-retry", "* * * * *");
  for (const [name, { handler, options }] of handlers) {
    await b.work(name, options, async (jobs) => {
      for (const job of jobs) await handler(job.data);
    });
  }
  return async () => {
    await b.stop({ graceful: true, timeout: 10_000 });
  };
}
