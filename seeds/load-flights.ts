import { existsSync, readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { eq } from "drizzle-orm";
import type { NodePgDatabase } from "drizzle-orm/node-postgres";
import * as schema from "../app/db/schema";
import { createFlight } from "../app/models/flights.server";
import { importFindingsCsv, storeImage } from "../app/models/findings.server";
import { createCamera, listCameras } from "../app/models/inspection.server";

interface FlightJson {
  date: string;
  start: string;
  end: string;
  blocks: string[];
  pilot: string;
  aircraft: string;
  camera: string;
  altitudeM: number;
  conditions: { poaWm2: number; ambientC: number; windMs: number; cloudOkta: number; note?: string };
  dataArchived: boolean;
  notes?: string;
}

const DEMO_CAMERA = { name: "Radiometric 640 (demo)", widthPx: 640, heightPx: 512, pixelPitchUm: 17, focalLengthsMm: [13, 19] };

/**
 * Load the generated demo flight (flight.json, findings.csv, images/) through the product's own
 * paths: the flight log, the all-or-nothing findings import (which runs the cross-reference) and
 * object storage for the pictures.
 */
export async function loadDemoFlight(
  db: NodePgDatabase<typeof schema>,
  p: { orgId: string; siteId: string; pilotUserId: string; dir: string },
): Promise<{ flightId: string; findings: number; images: number; explained: number; needsFlight: number }> {
  const f = JSON.parse(readFileSync(join(p.dir, "flight.json"), "utf8")) as FlightJson;
  const [site] = await db.select().from(schema.sites).where(eq(schema.sites.id, p.siteId)).limit(1);
  if (!site) throw new Error("demo flight: no such site");
  const blocks = await db.select().from(schema.blocks).where(eq(schema.blocks.siteId, p.siteId));
  const blockIds = f.blocks.map((name) => blocks.find((b) => b.name === name)?.id).filter((x): x is number => x != null);
  const actor = { orgId: p.orgId, userId: p.pilotUserId };

  let camera = (await listCameras(p.orgId)).find((c) => c.name === DEMO_CAMERA.name);
  if (!camera) {
    await createCamera(actor, DEMO_CAMERA);
    camera = (await listCameras(p.orgId)).find((c) => c.name === DEMO_CAMERA.name)!;
  }
  const focal = Number(/(\d+(?:\.\d+)?)\s*mm/.exec(f.camera)?.[1] ?? 13);
  const lens = camera.lenses.find((l) => l.focalLengthMm === focal) ?? camera.lenses[0];

  const startMs = Date.parse(f.start);
  const created = await createFlight(actor, site, {
    startedLocal: f.start.slice(0, 16),
    durationMin: Math.round((Date.parse(f.end) - startMs) / 60_000),
    blockIds,
    pilotName: f.pilot,
    aircraft: f.aircraft,
    cameraId: camera.id,
    lensId: lens?.id,
    cameraText: f.camera,
    altitudeM: f.altitudeM,
    poaWm2: f.conditions.poaWm2,
    windKmh: Math.round(f.conditions.windMs * 3.6 * 10) / 10,
    cloudOkta: f.conditions.cloudOkta,
    ambientC: f.conditions.ambientC,
    dataArchived: f.dataArchived,
    archiveLocation: f.dataArchived ? "site O&M server, /thermography/" + f.date : undefined,
    notes: [f.notes, f.conditions.note].filter(Boolean).join(" — ") || undefined,
  });
  if (!created.ok) throw new Error(`demo flight refused: ${JSON.stringify(created.errors)}`);
  const flightId = created.flight.id;

  const imported = await importFindingsCsv(actor, p.siteId, flightId, readFileSync(join(p.dir, "findings.csv"), "utf8"), { source: "seed" });
  if (!imported.ok) throw new Error(`demo findings refused: ${imported.errors.map((e) => `line ${e.line}: ${e.reason}`).join("; ")}`);

  let images = 0;
  const imgDir = join(p.dir, "images");
  if (existsSync(imgDir)) {
    for (const name of readdirSync(imgDir).sort()) {
      if (!/\.(png|jpe?g)$/i.test(name)) continue;
      if (await storeImage(p.siteId, flightId, name, readFileSync(join(imgDir, name)), /\.png$/i.test(name) ? "image/png" : "image/jpeg")) images++;
    }
  }
  return { flightId, findings: imported.imported, images, explained: imported.xref?.explained ?? 0, needsFlight: imported.xref?.needsFlight ?? 0 };
}
