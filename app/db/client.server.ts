import { drizzle, type NodePgDatabase } from "drizzle-orm/node-postgres";
import pg from "pg";
import * as schema from "./schema";
import { env } from "~/env.server";

export type Db = NodePgDatabase<typeof schema>;

declare global {
  // One pool per process, kept across dev-server reloads.
  var __sunsiftPool: pg.Pool | undefined;
  var __sunsiftDb: Db | undefined;
}

export function pool(): pg.Pool {
  if (!globalThis.__sunsiftPool) {
    const p = new pg.Pool({ connectionString: env().DATABASE_URL, max: 20, allowExitOnIdle: true });
    // Without a listener an idle client's error (PostgreSQL restarting) kills the process.
    p.on("error", (err) => console.warn("database connection lost:", err.message));
    globalThis.__sunsiftPool = p;
  }
  return globalThis.__sunsiftPool;
}

export function db(): Db {
  if (!globalThis.__sunsiftDb) globalThis.__sunsiftDb = drizzle(pool(), { schema });
  return globalThis.__sunsiftDb;
}

/** Ends this process's pool, for scripts that should end on their own (see shutdown.server.ts). */
export async function closePool(): Promise<void> {
  const p = globalThis.__sunsiftPool;
  globalThis.__sunsiftPool = undefined;
  globalThis.__sunsiftDb = undefined;
  await p?.end();
}
