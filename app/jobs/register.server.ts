// Each feature's job handlers, registered with the worker. Imported by scripts/worker.ts.
export {};
import { registerHandler } from "./worker.server";
import { importReadingsJob } from "./import-readings.server";

registerHandler("import-readings", importReadingsJob);
import { handleAnalysisJob } from "./analysis.server";

registerHandler("analysis", handleAnalysisJob);
import { registerNotificationJobs } from "./notifications.server";

registerNotificationJobs();
