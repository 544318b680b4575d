/** The background worker: imports, analysis and e-mail retries, from the PostgreSQL-backed queue. */
import { startWorker } from "../app/jobs/worker.server";
import { sweepInterruptedImports } from "../app/jobs/import-readings.server";
import { sweepStuckRuns } from "../app/jobs/analysis.server";
import "../app/jobs/register.server";

// Before taking jobs: imports a killed worker left "running" are marked failed with the reason;
// then every minute for imports whose connection was cut while this worker lives. Imports queued
// for over 30 minutes, and analysis runs queued or lost for over 30 minutes, are failed too.
async function sweep(minAgeSeconds: number): Promise<void> {
  const n = await sweepInterruptedImports(minAgeSeconds);
  if (n) console.log(`worker: ${n} interrupted or stuck import${n === 1 ? "" : "s"} marked failed`);
  const runs = await sweepStuckRuns();
  if (runs) console.log(`worker: ${runs} stuck analysis run${runs === 1 ? "" : "s"} marked failed`);
}

sweep(0)
  .then(() => {
    setInterval(() => void sweep(60).catch(() => undefined), 60_000).unref();
    return startWorker();
  })
  .then(
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
