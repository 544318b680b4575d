/**
 * Maximum string voltage: NFPA 70 (NEC 2017) Table 690.7(A) low-temperature correction for
 * crystalline silicon, and the module count per string that stays under the system limit.
 */

/** [lowest ambient lower bound °C, factor]: the row covers lower bound … lower bound + 4. */
const NEC_690_7A: readonly (readonly [number, number])[] = [
  [20, 1.02],
  [15, 1.04],
  [10, 1.06],
  [5, 1.08],
  [0, 1.1],
  [-5, 1.12],
  [-10, 1.14],
  [-15, 1.16],
  [-20, 1.18],
  [-25, 1.2],
  [-30, 1.21],
  [-35, 1.23],
  [-40, 1.25],
];

/**
 * Correction factor for the lowest expected ambient temperature. 1.00 at 25 °C and above;
 * a value between two integer rows takes the colder (higher) factor; null below −40 °C,
 * where the table ends and the module maker's coefficient must be used.
 */
export function necVoltageCorrectionFactor(lowestAmbientC: number): number | null {
  if (lowestAmbientC >= 25) return 1;
  for (const [lower, factor] of NEC_690_7A) if (lowestAmbientC >= lower) return factor;
  return null;
}

/** Voc corrected by the NEC table, V per module. */
export function necCorrectedVoc(vocStc: number, lowestAmbientC: number): number | null {
  const f = necVoltageCorrectionFactor(lowestAmbientC);
  return f == null ? null : vocStc * f;
}

/** Voc from the manufacturer's coefficient β (fraction per °C, negative): Voc·(1 + β(T − 25)). */
export function vocAtTemperature(vocStc: number, cellTempC: number, betaVocPerC: number): number {
  return vocStc * (1 + betaVocPerC * (cellTempC - 25));
}

/** Largest module count per string with N·Voc,max ≤ the system voltage limit (1000 or 1500 V). */
export function maxModulesPerString(vocMaxPerModule: number, systemVoltageLimit: number): number {
  if (!(vocMaxPerModule > 0)) return 0;
  // tolerance so an exact fit is not lost to floating point
  return Math.floor(systemVoltageLimit / vocMaxPerModule + 1e-9);
}
