// Each feature's job handlers, registered with the worker. Imported by scripts/worker.ts.
export {};
import { registerHandler } from "./worker.server";
import { importReadingsJob } from "./import-readings.server";

registerHandler("import-readings", importReadingsJob);
import { handleAnalysisJob } from "./analysis.server";

registerHandler("analysis", handleAnalysisJob);
import { registerNotificationJobs } from "./notifications.server";

registerNotificationJobs();
import { RESET_MAIL_JOB, sendPasswordResetMail } from "~/services/account-links.server";

// Reset links are looked up and mailed here, not in the request: the answer takes the same time
// whether or not the address has an account. Small, quick jobs: many per fetch, fetched every second.
registerHandler(RESET_MAIL_JOB, sendPasswordResetMail, { batchSize: 20, pollingIntervalSeconds: 1 });
