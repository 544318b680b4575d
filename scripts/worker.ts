/** The background worker: imports, analysis and e-mail retries, from the PostgreSQL-backed queue. */
import { startWorker } from "../app/jobs/worker.server";
import "../app/jobs/register.server";

startWorker().then(
  (stop) => {
    console.log("worker: waiting for jobs");
    const shutdown = () => stop().then(() => process.exit(0));
    process.on("SIGINT", shutdown);
    process.on("SIGTERM", shutdown);
  },
  (e: unknown) => {
    console.error("worker failed to start:", e instanceof Error ? e.message : e);
    process.exit(1);
  },
);
