import { data, type MiddlewareFunction } from "react-router";
import { pool } from "~/db/client.server";

export const DATABASE_DOWN = "The database is not answering right now. Your data is safe; try again in a moment.";

let downSince: number | null = null;

/** Whether PostgreSQL answers a trivial query within two seconds. */
async function databaseAnswers(): Promise<boolean> {
  let timer: NodeJS.Timeout | undefined;
  try {
    const timeout = new Promise<false>((resolve) => (timer = setTimeout(() => resolve(false), 2000)));
    const ok = await Promise.race([pool().query("select 1").then(() => true, () => false), timeout]);
    downSince = ok ? null : (downSince ?? Date.now());
    return ok;
  } finally {
    clearTimeout(timer);
  }
}

function unavailable(request: Request): never {
  // The API answers JSON; screens render the error page ("Temporarily unavailable").
  if (new URL(request.url).pathname.startsWith("/api/"))
    throw Response.json({ error: DATABASE_DOWN }, { status: 503, headers: { "Retry-After": "5", "Cache-Control": "no-store" } });
  throw data({ message: DATABASE_DOWN }, { status: 503, headers: { "Retry-After": "5" } });
}

/**
 * While PostgreSQL restarts, requests fail inside their loaders with connection errors (a 500).
 * Answer 503 with a plain message instead: after a server error, ask the database whether it is
 * there; while it was recently found down, ask before running the request at all. The pool
 * reconnects by itself, so the app recovers without a restart.
 */
export const databaseUnavailableMiddleware: MiddlewareFunction<Response> = async ({ request }, next) => {
  if (downSince !== null && !(await databaseAnswers())) unavailable(request);
  const res = await next();
  if (res.status >= 500 && res.status !== 503 && !(await databaseAnswers())) unavailable(request);
  return res;
};
