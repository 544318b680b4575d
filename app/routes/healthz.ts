import { sql } from "drizzle-orm";
import { db } from "~/db/client.server";

export async function loader() {
  try {
    await db().execute(sql`select 1`);
    return Response.json({ status: "ok", database: "up" }, { headers: { "Cache-Control": "no-store" } });
  } catch (e) {
    return Response.json({ status: "degraded", database: "down", error: (e as Error).message }, { status: 503 });
  }
}
