import { z } from "zod";

/**
 * The settings of one site, as the form and the API send them. One schema for both, so
 * a machine client and a person are held to the same rules.
 */

export const MODULE_TYPES = [
  "glass_glass_open_rack",
  "glass_glass_close_roof",
  "glass_polymer_open_rack",
  "glass_polymer_insulated_back",
  "polymer_thinfilm_steel_open_rack",
] as const;

export const PEER_GROUPINGS = ["inverter", "block", "string_count"] as const;

const num = (label: string) =>
  z.coerce.number({ error: `${label} must be a number` }).refine(Number.isFinite, `${label} must be a number`);

const timezone = z.string().min(1, "Choose a time zone").refine((tz) => {
  try {
    new Intl.DateTimeFormat("en", { timeZone: tz });
    return tz.includes("/") || tz === "UTC";
  } catch {
    return false;
  }
}, "Unknown time zone: use an IANA name such as Europe/Madrid");

export const mountingSchema = z.discriminatedUnion("kind", [
  z.object({
    kind: z.literal("fixed"),
    tilt: num("Tilt").min(0, "Tilt is between 0 and 90°").max(90, "Tilt is between 0 and 90°"),
    azimuth: num("Azimuth").min(0, "Azimuth is between 0 and 360° (180 = south)").max(360, "Azimuth is between 0 and 360° (180 = south)"),
  }),
  z.object({
    kind: z.literal("tracker"),
    axisAzimuth: num("Axis azimuth").min(0, "Axis azimuth is between 0 and 360°").max(360, "Axis azimuth is between 0 and 360°"),
    maxAngle: num("Rotation limit").min(0, "Rotation limit is between 0 and 90°").max(90, "Rotation limit is between 0 and 90°"),
    gcr: num("Ground coverage ratio").gt(0, "Ground coverage ratio is between 0 and 1").lt(1, "Ground coverage ratio is between 0 and 1"),
  }),
]);

export const moduleSchema = z.object({
  pmp: num("Pmp").positive("Pmp must be above 0 W"),
  vmp: num("Vmp").positive("Vmp must be above 0 V"),
  imp: num("Imp").positive("Imp must be above 0 A"),
  voc: num("Voc").positive("Voc must be above 0 V"),
  isc: num("Isc").positive("Isc must be above 0 A"),
  /** Temperature coefficients in %/°C, as datasheets print them. */
  alphaIsc: num("Temperature coefficient of Isc"),
  betaVoc: num("Temperature coefficient of Voc"),
  gammaPmp: num("Temperature coefficient of Pmp"),
});

export const thresholdsSchema = z.object({
  minPoa: num("Minimum POA").min(0).max(1200).default(600),
  minSunElevation: num("Minimum sun elevation").min(0).max(60).default(10),
  robustZ: num("Robust z threshold").max(0, "The robust z threshold is negative").default(-3.5),
  flagDaysN: z.coerce.number().int().min(1).max(30).default(3),
  flagDaysM: z.coerce.number().int().min(1).max(30).default(5),
  minDeficitStrings: num("Minimum deficit").min(0).max(5).default(0.5),
  peerGroup: z.enum(PEER_GROUPINGS).default("inverter"),
  explainedThreshold: num("Explained threshold").min(0).max(1).default(0.7),
  recoveryDays: z.coerce.number().int().min(1).max(60).default(5),
  irMinPoa: num("IR minimum POA").min(0).max(1200).default(600),
  irMaxWindKmh: num("IR maximum wind").min(0).max(100).default(28),
  irMaxCloudOkta: z.coerce.number().int().min(0).max(8).default(2),
});

export const siteSettingsSchema = z
  .object({
    name: z.string().trim().min(1, "Give the site a name").max(120, "Keep the name under 120 characters"),
    latitude: num("Latitude").min(-90, "Latitude is between −90 and 90").max(90, "Latitude is between −90 and 90"),
    longitude: num("Longitude").min(-180, "Longitude is between −180 and 180").max(180, "Longitude is between −180 and 180"),
    elevation: num("Elevation").min(-500).max(9000).default(0),
    timezone,
    dcCapacityKw: num("DC capacity").positive("DC capacity must be above 0 kW"),
    acCapacityKw: num("AC capacity").positive("AC capacity must be above 0 kW"),
    currency: z.string().trim().regex(/^[A-Z]{3}$/, "Currency is a three-letter code such as EUR or USD"),
    tariffPerMwh: num("Tariff").min(0, "Tariff cannot be negative"),
    mounting: mountingSchema,
    module: moduleSchema,
    temperatureSource: z.discriminatedUnion("kind", [
      z.object({ kind: z.literal("sensor"), backOffsetC: num("Back-of-module offset").min(0).max(10).default(3) }),
      z.object({ kind: z.literal("sandia"), moduleType: z.enum(MODULE_TYPES) }),
    ]),
    dataConvention: z.enum(["start", "end"]).default("start"),
    metStations: z.array(z.string().trim().min(1)).min(1).default(["MET1"]),
    thresholds: thresholdsSchema.default(thresholdsSchema.parse({})),
  })
  .refine((s) => s.thresholds.flagDaysN <= s.thresholds.flagDaysM, {
    path: ["thresholds", "flagDaysN"],
    message: "N days cannot exceed the M-day window",
  });

export type SiteSettings = z.infer<typeof siteSettingsSchema>;
export type SiteSettingsInput = z.input<typeof siteSettingsSchema>;
export type Thresholds = z.infer<typeof thresholdsSchema>;

/**
 * Datasheet coefficients outside the usual ranges for crystalline silicon are warned about,
 * not refused: some modules are unusual, and a typo is more likely than a bad module.
 * Bounds: c-Si medians of the Sandia module database (2015) with margins; common practice [P].
 */
export function moduleWarnings(m: z.infer<typeof moduleSchema>): { field: string; message: string }[] {
  const out: { field: string; message: string }[] = [];
  if (m.gammaPmp < -0.6 || m.gammaPmp > -0.2)
    out.push({ field: "module.gammaPmp", message: `γPmp ${m.gammaPmp} %/°C is outside the usual −0.6…−0.2 %/°C for crystalline silicon` });
  if (m.betaVoc < -0.45 || m.betaVoc > -0.2)
    out.push({ field: "module.betaVoc", message: `βVoc ${m.betaVoc} %/°C is outside the usual −0.45…−0.2 %/°C` });
  if (m.alphaIsc < 0 || m.alphaIsc > 0.1)
    out.push({ field: "module.alphaIsc", message: `αIsc ${m.alphaIsc} %/°C is outside the usual 0…+0.1 %/°C` });
  if (m.imp > m.isc) out.push({ field: "module.imp", message: "Imp is above Isc: check the datasheet values" });
  if (m.vmp > m.voc) out.push({ field: "module.vmp", message: "Vmp is above Voc: check the datasheet values" });
  return out;
}
