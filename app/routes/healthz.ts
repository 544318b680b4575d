import { randomBytes } from "node:crypto";
import { sql } from "drizzle-orm";
import { db } from "~/db/client.server";

export async function loader() {
  try {
    await db().execute(sql`select 1`);
    return Response.json({ status: "ok", database: "up" }, { headers: { "Cache-Control": "no-store" } });
  } catch (e) {
    // The database's own words go to the log only, under a reference the answer gives.
    const ref = randomBytes(4).toString("hex");
    console.error(`healthz: the database did not answer (ref ${ref}):`, (e as Error).message);
    return Response.json({ status: "degraded", database: "down", error: `The database did not answer (ref ${ref}).` }, { status: 503, headers: { "Cache-Control": "no-store" } });
  }
}
