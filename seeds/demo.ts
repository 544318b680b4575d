import { fileURLToPath } from "node:url";


import { drizzle } from "drizzle-orm/node-postgres";
import pg from "pg";
import * as schema from "../app/db/schema";
import { DEMO_USERS, removeDemo, seedAccounts } from "./load-accounts";
import { demoSiteId, loadDemoSite } from "./load-plant";
import { generate } from "./generate";
import { loadDemoReadings } from "./load-readings";
import { loadDemoFlight } from "./load-flights";
import { loadDemoWork } from "./load-work";
import { runAnalysis } from "../app/models/analysis.server";
import { closeSharedResources } from "../app/services/shutdown.server";

/**
 * Seeds the demo: the demo organisation and its accounts (first time only), then (when the demo
 * organisation has no site yet) the demo plant, generated fresh so that its 60 days end yesterday,
 * and loaded through the product's own import paths. `reset` removes the demo organisation and
 * its own users first (nothing else); `accountsOnly` stops after the accounts.
 */
export async function seedDemo(databaseUrl: string, opts: { reset: boolean; accountsOnly: boolean; log?: (s: string) => void }) {
  const log = opts.log ?? console.log;
  const pool = new pg.Pool({ connectionString: databaseUrl });
  const db = drizzle(pool, { schema });
  const started = Date.now();
  try {
    if (opts.reset) {
      const gone = await removeDemo(db);
      log(`demo removed: ${gone.organisations} organisation, ${gone.users} users`);
    }
    const { orgId, userIds, created } = await seedAccounts(db);
    log(created ? "demo organisation and accounts created" : "demo organisation already there (left as it is)");
    if (opts.accountsOnly) return;
    if (await demoSiteId(db, orgId)) {
      log("demo plant already loaded (npm run seed:demo -- --reset rebuilds it)");
      return;
    }
    const missing = DEMO_USERS.filter((u) => !userIds[u.email]).map((u) => u.email);
    if (missing.length) {
      log(`not loading the demo plant: the demo organisation lacks ${missing.join(", ")} (npm run seed:demo -- --reset rebuilds it)`);
      return;
    }
    const dir = fileURLToPath(new URL("../.data/demo-plant", import.meta.url));
    const t0 = Date.now();
    const gen = generate({ out: dir, nightRows: false });
    log(`demo plant generated in ${((Date.now() - t0) / 1000).toFixed(1)} s (${gen.files.length} files)`);
    const { siteId } = await loadDemoSite(db, { orgId, adminUserId: userIds["admin@sunsift.test"]!, ownerUserId: userIds["owner@sunsift.test"]!, dir });
    log(`demo site and layout loaded (${siteId})`);
    let t = Date.now();
    const r = await loadDemoReadings({ orgId, siteId, engineerUserId: userIds["engineer@sunsift.test"]!, dir, log });
    log(`readings imported: ${r.readings.toLocaleString("en")} in ${((Date.now() - t) / 1000).toFixed(1)} s`);
    t = Date.now();
    await runAnalysis(siteId, { trigger: "seed" });
    log(`analysis done in ${((Date.now() - t) / 1000).toFixed(1)} s`);
    const flight = await loadDemoFlight(db, { orgId, siteId, pilotUserId: userIds["pilot@sunsift.test"]!, dir });
    log(`demo flight loaded: ${flight.findings} findings, ${flight.explained} flags explained, ${flight.needsFlight} need a flight`);
    const work = await loadDemoWork(db, { orgId, siteId, userIds, dir });
    log(`demo work loaded: ${work.workOrders} work orders, ${work.inspections} inspections, ${work.recovered} verified recoveries`);
  } finally {
    await pool.end();
    log(`demo seeded in ${((Date.now() - started) / 1000).toFixed(1)} s`);
  }
}

/**
 * The demo accounts share a published password and an admin token, so the demo is seeded only when
 * asked: `--demo` on the command line (`npm run seed:demo` passes it) or SUNSIFT_DEMO=1 in the
 * environment (`npm start` sets it for its own embedded database only).
 */
export function demoAsked(argv: string[], env: NodeJS.ProcessEnv): boolean {
  return argv.includes("--demo") || env.SUNSIFT_DEMO === "1";
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const url = process.env.DATABASE_URL;
  const argv = process.argv.slice(2);
  if (!url) {
    console.error("DATABASE_URL is not set");
    process.exitCode = 2;
  } else if (!demoAsked(argv, process.env)) {
    console.error(
      "Not seeding the demo: its accounts share a published password. Run `npm run seed:demo` (or pass --demo, or set SUNSIFT_DEMO=1) to seed it into this database on purpose.",
    );
    process.exitCode = 2;
  } else {
    // The exit code says how it went; the process ends on its own once the shared pool, the job
    // queue and the object-store clients the import path opened are closed.
    seedDemo(url, { reset: argv.includes("--reset"), accountsOnly: argv.includes("--accounts-only") })
      .catch((e: unknown) => {
        console.error("Seeding failed:", e instanceof Error ? e.stack : e);
        process.exitCode = 1;
      })
      .finally(() => closeSharedResources());
  }
}
