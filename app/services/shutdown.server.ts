import { closePool } from "~/db/client.server";
import { closeQueue } from "~/jobs/queue.server";
import { closeStorage } from "./storage.server";

/**
 * Lets a command-line script end on its own once its work is done: stops the job queue, closes
 * the object-store clients and ends the database pool, whichever of them the script opened.
 */
export async function closeSharedResources(): Promise<void> {
  await closeQueue().catch((e: unknown) => console.warn("job queue did not stop cleanly:", e instanceof Error ? e.message : e));
  closeStorage();
  await closePool();
}
