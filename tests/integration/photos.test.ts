/**
 * Work-order and inspection photos: told by their bytes (JPEG, PNG, WebP only), never by the
 * browser's content type, and served by the app as attachments with a fixed type and nosniff, so
 * a file with script in it can never open as a page of ours.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import * as schema from "../../app/db/schema";
import { newObjectKey, putObject } from "../../app/services/storage.server";
import { createOrg, db } from "../helpers/db";
import { http, signIn } from "../helpers/http";

// A 2×2 PNG.
const PNG = Buffer.from("iVBORw0KGgoAAAANSUhEUgAAAAIAAAACCAIAAAD91JpzAAAAFklEQVR4nGP4z8DAwMDAxMDAwMDAAAANHQEDasKb6QAAAABJRU5ErkJggg==", "base64");
const JPEG = Buffer.concat([Buffer.from([0xff, 0xd8, 0xff, 0xe0, 0x00, 0x10]), Buffer.from("JFIF\0"), Buffer.alloc(64, 1), Buffer.from([0xff, 0xd9])]);
const WEBP = Buffer.concat([Buffer.from("RIFF"), Buffer.from([0x24, 0, 0, 0]), Buffer.from("WEBPVP8 "), Buffer.alloc(28, 0)]);
const SVG = Buffer.from(`<svg xmlns="http://www.w3.org/2000/svg"><script>fetch('/api/v1/me').then(r=>r.text()).then(t=>navigator.sendBeacon('/x',t))</script></svg>`);

let org: Awaited<ReturnType<typeof createOrg>>;
let cookie = "";
let woId = "";
let woUrl = "";

beforeAll(async () => {
  org = await createOrg("Photos");
  const [c] = await db.insert(schema.devices).values({ siteId: org.site.id, kind: "combiner", name: "C-PHOTO", stringCount: 12 }).returning();
  const [wo] = await db
    .insert(schema.workOrders)
    .values({ orgId: org.org.id, siteId: org.site.id, number: 1, combinerId: c!.id, stringNumbers: [3], title: "Photo check", whatToCheck: "Check string 3", state: "in progress", assigneeId: org.people.lead.id })
    .returning();
  woId = wo!.id;
  woUrl = `/sites/${org.site.id}/work-orders/${woId}`;
  cookie = (await signIn(org.people.lead.email, org.password)).cookie!;
  expect(cookie).toBeTruthy();
});

async function postPhotos(files: { name: string; type: string; bytes: Buffer }[]) {
  const form = new FormData();
  form.set("intent", "photos");
  for (const f of files) form.append("photos", new File([new Uint8Array(f.bytes)], f.name, { type: f.type }));
  return http(woUrl, { method: "POST", cookie, body: form });
}

async function photosOf(id: string): Promise<string[]> {
  const [wo] = await db.select({ photos: schema.workOrders.photos }).from(schema.workOrders).where(eq(schema.workOrders.id, id));
  return wo!.photos;
}

function photoPath(key: string): string {
  return `/sites/${org.site.id}/photos/${key.slice(`sites/${org.site.id}/`.length)}`;
}

describe("work-order photos", () => {
  it("attack: an SVG with script sent as image/svg+xml (or renamed .png, typed image/png) is refused by its bytes and not stored", async () => {
    for (const f of [
      { name: "evil.svg", type: "image/svg+xml", bytes: SVG },
      { name: "evil.png", type: "image/png", bytes: SVG },
      { name: "page.jpg", type: "image/jpeg", bytes: Buffer.from("<html><script>alert(1)</script></html>") },
    ]) {
      const r = await postPhotos([{ name: "ok.png", type: "image/png", bytes: PNG }, f]);
      expect(r.status, f.name).toBe(400);
      expect(r.body).toContain(`${f.name} is not a JPEG, PNG or WebP photo. Nothing was added.`);
    }
    // Not even the good photo sent alongside was kept.
    expect(await photosOf(woId)).toEqual([]);
  });

  it("attack: a stored photo is served as an attachment with the type its bytes show and nosniff, never as the browser named it", async () => {
    const r = await postPhotos([
      { name: "fuse.png", type: "text/html", bytes: PNG },
      { name: "box.jpeg", type: "image/svg+xml", bytes: JPEG },
      { name: "panel.webp", type: "application/octet-stream", bytes: WEBP },
    ]);
    expect(r.status).toBe(200);
    const keys = await photosOf(woId);
    expect(keys).toHaveLength(3);
    const want = [
      ["image/png", PNG, /fuse\.png$/],
      ["image/jpeg", JPEG, /box\.jpg$/],
      ["image/webp", WEBP, /panel\.webp$/],
    ] as const;
    // The page points at the app's photo route, not at the object store.
    const page = await http(woUrl, { cookie });
    for (const [i, [type, bytes, name]] of want.entries()) {
      const key = keys[i]!;
      expect(key).toMatch(name);
      expect(page.body).toContain(photoPath(key));
      const res = await fetch(`${process.env.APP_URL}${photoPath(key)}`, { headers: { cookie } });
      expect(res.status).toBe(200);
      expect(res.headers.get("content-type")).toBe(type);
      expect(res.headers.get("content-disposition")).toMatch(/^attachment; filename="[A-Za-z0-9_.-]+"$/);
      expect(res.headers.get("x-content-type-options")).toBe("nosniff");
      expect(Buffer.from(await res.arrayBuffer()).equals(bytes)).toBe(true);
    }
    // Signed out, or from another organisation: not served.
    const other = await createOrg("PhotosOther");
    const otherCookie = (await signIn(other.people.admin.email, other.password)).cookie!;
    expect((await http(photoPath(keys[0]!))).status).toBe(302);
    expect((await http(photoPath(keys[0]!), { cookie: otherCookie })).status).toBe(404);
    expect((await http(`/sites/${other.site.id}/photos/${keys[0]!.slice(`sites/${org.site.id}/`.length)}`, { cookie: otherCookie })).status).toBe(404);
  });

  it("attack: an SVG stored before photos were checked (or an object no work order lists) is not served", async () => {
    const [wo2] = await db
      .insert(schema.workOrders)
      .values({ orgId: org.org.id, siteId: org.site.id, number: 2, stringNumbers: [], title: "Old photo", whatToCheck: "-" })
      .returning();
    const svgKey = newObjectKey(`sites/${org.site.id}/work-orders/${wo2!.id}`, "old.png");
    await putObject(svgKey, SVG, SVG.length, "image/svg+xml");
    await db.update(schema.workOrders).set({ photos: [svgKey] }).where(eq(schema.workOrders.id, wo2!.id));
    const r = await http(photoPath(svgKey), { cookie });
    expect(r.status).toBe(404);
    expect(r.headers.get("content-type")).toMatch(/^text\/plain/);
    expect(r.body).not.toContain("<script>");
    // A real picture in the store that no work order lists.
    const loose = newObjectKey(`sites/${org.site.id}/work-orders/${wo2!.id}`, "loose.png");
    await putObject(loose, PNG, PNG.length, "image/png");
    expect((await http(photoPath(loose), { cookie })).status).toBe(404);
  });
});
