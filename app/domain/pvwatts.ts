/**
 * PVWatts v5 model pieces (Dobos 2014, NREL/TP-6A20-62641): system losses, DC power and the
 * inverter efficiency curve. Powers in W (any consistent unit), irradiance W/m², °C.
 */

export const PVWATTS_DEFAULT_LOSSES = {
  soiling: 2,
  shading: 3,
  snow: 0,
  mismatch: 2,
  wiring: 2,
  connections: 0.5,
  lid: 1.5,
  nameplate: 1,
  age: 0,
  availability: 3,
} as const;

export type PvwattsLossName = keyof typeof PVWATTS_DEFAULT_LOSSES;

/** Temperature coefficients of power per module type, 1/°C. */
export const PVWATTS_GAMMA = { standard: -0.0047, premium: -0.0035, thin_film: -0.002 } as const;
export type PvwattsModuleType = keyof typeof PVWATTS_GAMMA;

/** Losses combined multiplicatively: 100·[1 − Π(1 − Li/100)], percent. */
export function totalLossesPercent(losses: Partial<Record<PvwattsLossName, number>> = PVWATTS_DEFAULT_LOSSES): number {
  const keep = Object.values(losses).reduce<number>((p, l) => p * (1 - (l ?? 0) / 100), 1);
  return 100 * (1 - keep);
}

/** Pdc = G/1000 · Pdc0 · (1 + γ(Tc − 25)). */
export function pvwattsDc(poa: number, cellTempC: number, pdc0: number, gammaPerC: number): number {
  return (poa / 1000) * pdc0 * (1 + gammaPerC * (cellTempC - 25));
}

/** η(ζ) = (ηnom/ηref)(−0.0162ζ − 0.0059/ζ + 0.9858), ζ = Pdc/Pdc0. Null for ζ ≤ 0. */
export function pvwattsInverterEfficiency(zeta: number, etaNom = 0.96, etaRef = 0.9637): number | null {
  if (!(zeta > 0)) return null;
  return (etaNom / etaRef) * (-0.0162 * zeta - 0.0059 / zeta + 0.9858);
}

/**
 * AC power: Pac = min(η·Pdc, ηnom·Pdc0), 0 when Pdc ≤ 0 or the efficiency goes negative.
 * Pdc0 is the inverter's DC input rating (= Pac0/ηnom).
 */
export function pvwattsAc(pdc: number, pdc0Inverter: number, etaNom = 0.96, etaRef = 0.9637): number {
  const eta = pvwattsInverterEfficiency(pdc / pdc0Inverter, etaNom, etaRef);
  if (eta == null || eta <= 0) return 0;
  return Math.min(eta * pdc, etaNom * pdc0Inverter);
}
