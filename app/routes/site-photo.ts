import type { Route } from "./+types/site-photo";
import { sql } from "drizzle-orm";
import { Readable } from "node:stream";
import { db } from "~/db/client.server";
import { requireSiteResource } from "~/services/session.server";
import { getObjectStream } from "~/services/storage.server";
import { PHOTO_KINDS, photoKind } from "~/services/photos.server";

function notFound(): Response {
  return new Response("Photo not found", { status: 404, headers: { "Content-Type": "text/plain; charset=utf-8", "X-Content-Type-Options": "nosniff" } });
}

/**
 * GET /sites/:siteId/photos/* — a work-order or inspection photo of the site. Only a key that a
 * work order or inspection of the site lists; its first bytes must be a JPEG, PNG or WebP (a file
 * stored before photos were checked is refused if it is not), and it goes out as an attachment
 * with the detected kind's type and nosniff, so a browser never runs it as a page.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSiteResource(request, params.siteId, "workorders:view");
  const rest = params["*"] ?? "";
  if (!/^(work-orders|inspections)\/[0-9a-f-]{36}\/[A-Za-z0-9_-]{22}\/[A-Za-z0-9._-]{1,120}$/.test(rest)) return notFound();
  const key = `sites/${site.id}/${rest}`;
  const listed = await db().execute<{ ok: boolean }>(sql`
    select exists (select 1 from work_orders where site_id = ${site.id} and ${key} = any(photos))
        or exists (select 1 from inspections where site_id = ${site.id} and ${key} = any(photos)) as ok`);
  if (!listed.rows[0]?.ok) return notFound();
  let body: Readable;
  try {
    body = await getObjectStream(key);
  } catch {
    return notFound();
  }
  // The first chunk carries the signature (the store sends far more than 12 bytes at once).
  const it = body[Symbol.asyncIterator]();
  const first = await it.next();
  const head = first.done ? Buffer.alloc(0) : (first.value as Buffer);
  const kind = photoKind(head);
  if (!kind) {
    body.destroy();
    return notFound();
  }
  const rebuilt = Readable.from((async function* () {
    yield head;
    for (;;) {
      const n = await it.next();
      if (n.done) return;
      yield n.value as Buffer;
    }
  })());
  const name = rest.split("/").pop()!.replace(/\.[^.]*$/, "");
  return new Response(Readable.toWeb(rebuilt) as ReadableStream, {
    headers: {
      "Content-Type": PHOTO_KINDS[kind].type,
      "Content-Disposition": `attachment; filename="${name}.${PHOTO_KINDS[kind].ext}"`,
      "X-Content-Type-Options": "nosniff",
      "Cache-Control": "private, max-age=3600",
    },
  });
}
