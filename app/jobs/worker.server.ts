import { boss } from "./queue.server";
import { retryQueuedEmails } from "~/services/mail.server";

type Handler = (data: unknown) => Promise<void>;
const handlers = new Map<string, Handler>();

/** Later features register their job handlers here before the worker starts. */
export function registerHandler(name: string, handler: Handler): void {
  handlers.set(name, handler);
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
  for (const [name, handler] of handlers) {
    await b.work(name, { batchSize: 1 }, async (jobs) => {
      for (const job of jobs) await handler(job.data);
    });
  }
  return async () => {
    await b.stop({ graceful: true, timeout: 10_000 });
  };
}
