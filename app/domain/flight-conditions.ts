/**
 * Checks of a flight's measured conditions against the site's infrared-inspection settings
 * (defaults 600 W/m² POA, 28 km/h wind, 2 okta cloud: IEC TS 62446-3:2017 as summarised, not
 * read in full), the drone cautions, and the camera altitudes for cell- and string-level work.
 */
import { footprintM, gsdM, maxAltitudeForCell } from "./photogrammetry";

export interface IrThresholds {
  irMinPoa: number;
  irMaxWindKmh: number;
  irMaxCloudOkta: number;
}

export interface MeasuredConditions {
  poaWm2: number | null;
  windKmh: number | null;
  cloudOkta: number | null;
  ambientC: number | null;
}

export interface ConditionCheck {
  key: "poa" | "wind" | "cloud" | "ambient";
  ok: boolean | null;
  message: string;
}

const fmt = (x: number) => String(Math.round(x * 10) / 10);

export function checkConditions(c: MeasuredConditions, t: IrThresholds): ConditionCheck[] {
  const out: ConditionCheck[] = [];
  if (c.poaWm2 == null) out.push({ key: "poa", ok: null, message: `POA not recorded: infrared inspection needs at least ${t.irMinPoa} W/m² on the module plane` });
  else if (c.poaWm2 < t.irMinPoa) out.push({ key: "poa", ok: false, message: `POA ${fmt(c.poaWm2)} W/m² is below the ${t.irMinPoa} W/m² minimum for this inspection` });
  else out.push({ key: "poa", ok: true, message: `POA ${fmt(c.poaWm2)} W/m² meets the ${t.irMinPoa} W/m² minimum` });
  if (c.windKmh == null) out.push({ key: "wind", ok: null, message: `Wind not recorded: the maximum for this inspection is ${t.irMaxWindKmh} km/h` });
  else if (c.windKmh > t.irMaxWindKmh) out.push({ key: "wind", ok: false, message: `Wind ${fmt(c.windKmh)} km/h is above the ${t.irMaxWindKmh} km/h maximum: wind cools the modules and hides defects` });
  else out.push({ key: "wind", ok: true, message: `Wind ${fmt(c.windKmh)} km/h is within the ${t.irMaxWindKmh} km/h maximum` });
  if (c.cloudOkta == null) out.push({ key: "cloud", ok: null, message: `Cloud not recorded: the maximum is ${t.irMaxCloudOkta} okta` });
  else if (c.cloudOkta > t.irMaxCloudOkta) out.push({ key: "cloud", ok: false, message: `Cloud ${c.cloudOkta} okta is above the ${t.irMaxCloudOkta} okta maximum: passing clouds change module temperatures` });
  else out.push({ key: "cloud", ok: true, message: `Cloud ${c.cloudOkta} okta is within the ${t.irMaxCloudOkta} okta maximum` });
  if (c.ambientC != null && c.ambientC >= 35)
    out.push({ key: "ambient", ok: null, message: `Ambient ${fmt(c.ambientC)} °C: hot day — watch battery temperature and the crew's heat exposure` });
  return out;
}

export const DRONE_CAUTIONS = [
  "Follow the airspace rules that apply at this site and the operator's licence; local aviation rules decide, not this list.",
  "Keep the aircraft in visual line of sight, with an observer when the rules ask for one.",
  "Heat: batteries lose capacity and may overheat; keep them shaded and check their temperature before each take-off.",
  "Heat and glare for the crew: water, shade, breaks; wear eye protection.",
  "Stay clear of overhead lines, the substation and meteorological masts; agree the flight with the site's control room.",
  "Do not fly over people working in the rows; tell the site team when and where you fly.",
] as const;

export const CONDITIONS_CHECKLIST = (t: IrThresholds) => [
  `POA on the module plane at least ${t.irMinPoa} W/m², steady (no passing clouds)`,
  `Wind at most ${t.irMaxWindKmh} km/h`,
  `Cloud at most ${t.irMaxCloudOkta} okta`,
  "Plant producing (inverters on, strings under load)",
  "Camera view as near the module normal as possible, at most 30° off, away from the sun's reflection",
  "Record POA, wind, cloud and ambient temperature at take-off",
];

export interface CameraPlan {
  gsdCmAt: (altitudeM: number) => number;
  /** Highest altitude keeping ≥ 5×5 IR pixels per cell (cell-level work, IEC TS 62446-3 as summarised). */
  cellLevelMaxAltitudeM: number;
  /** Highest altitude keeping ≥ 2 pixels per cell (string-level scans, common practice [P]). */
  stringLevelMaxAltitudeM: number;
  footprintAt: (altitudeM: number) => { widthM: number; heightM: number };
}

export function cameraPlan(cam: { widthPx: number; heightPx: number; pixelPitchUm: number }, focalLengthMm: number, cellSizeM = 0.182): CameraPlan {
  return {
    gsdCmAt: (a) => gsdM(a, cam.pixelPitchUm, focalLengthMm) * 100,
    cellLevelMaxAltitudeM: maxAltitudeForCell(cellSizeM, cam.pixelPitchUm, focalLengthMm, 5),
    stringLevelMaxAltitudeM: maxAltitudeForCell(cellSizeM, cam.pixelPitchUm, focalLengthMm, 2),
    footprintAt: (a) => footprintM(a, cam.pixelPitchUm, focalLengthMm, cam.widthPx, cam.heightPx),
  };
}
