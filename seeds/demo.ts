import { drizzle } from "drizzle-orm/node-postgres";
import pg from "pg";
import * as schema from "../app/db/schema";
import { seedAccounts } from "./load-accounts";

/**
 * Seeds the demo: accounts, then (when the database holds no site yet) the demo plant.
 * `--reset` empties the demo organisation first.
 */
async function main() {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error("DATABASE_URL is not set");
  const pool = new pg.Pool({ connectionString: url });
  const db = drizzle(pool, { schema });
  const started = Date.now();
  try {
    if (process.argv.includes("--reset")) {
      await db.delete(schema.organisations);
      await db.delete(schema.users);
    }
    await seedAccounts(db);
    if (!process.argv.includes("--accounts-only")) {
      // The demo plant is loaded here once its generator and loader exist.
    }
    console.log(`demo seeded in ${((Date.now() - started) / 1000).toFixed(1)} s`);
  } finally {
    await pool.end();
  }
}

main().catch((e: unknown) => {
  console.error("Seeding failed:", e instanceof Error ? e.stack : e);
  process.exit(1);
});
