/**
 * Oxalic acid chemistry: molar masses, dihydrate ↔ anhydrous equivalence, and the physical
 * temperatures that decide whether a vaporizer's block temperature band can work.
 */

/** IUPAC conventional standard atomic weights used here (g/mol). */
export const ATOMIC_WEIGHTS = { H: 1.008, C: 12.011, O: 15.999 } as const;

/** A chemical element this module knows the atomic weight of. */
export type Element = keyof typeof ATOMIC_WEIGHTS;

/** Molar mass (g/mol) of a formula given as atom counts, e.g. { C: 2, H: 2, O: 4 }. */
export function molarMass(formula: Partial<Record<Element, number>>): number {
  let total = 0;
  for (const [element, count] of Object.entries(formula) as [Element, number][]) {
    if (!Number.isInteger(count) || count < 0) {
      throw new RangeError(`atom count for ${element} must be a whole number ≥ 0, got ${count}`);
    }
    total += ATOMIC_WEIGHTS[element] * count;
  }
  return total;
}

/** Anhydrous oxalic acid, C2H2O4. */
export const OXALIC_ACID_ANHYDROUS_FORMULA = { C: 2, H: 2, O: 4 } as const;
/** Oxalic acid dihydrate, C2H2O4·2H2O (= C2H6O6). */
export const OXALIC_ACID_DIHYDRATE_FORMULA = { C: 2, H: 6, O: 6 } as const;

/** Molar mass of anhydrous oxalic acid, g/mol (≈ 90.034). */
export const OXALIC_ACID_ANHYDROUS_MOLAR_MASS = molarMass(OXALIC_ACID_ANHYDROUS_FORMULA);
/** Molar mass of oxalic acid dihydrate, g/mol (≈ 126.064). */
export const OXALIC_ACID_DIHYDRATE_MOLAR_MASS = molarMass(OXALIC_ACID_DIHYDRATE_FORMULA);
/** Mass of anhydrous oxalic acid in one gram of the dihydrate (≈ 0.71419). */
export const ANHYDROUS_PER_DIHYDRATE = OXALIC_ACID_ANHYDROUS_MOLAR_MASS / OXALIC_ACID_DIHYDRATE_MOLAR_MASS;

/** Grams of anhydrous oxalic acid contained in a mass of oxalic acid dihydrate. */
export function anhydrousEquivalentGrams(dihydrateGrams: number): number {
  if (!Number.isFinite(dihydrateGrams) || dihydrateGrams < 0) {
    throw new RangeError(`dihydrate grams must be a finite number ≥ 0, got ${dihydrateGrams}`);
  }
  return dihydrateGrams * ANHYDROUS_PER_DIHYDRATE;
}

/** Grams of oxalic acid dihydrate that contain a mass of anhydrous oxalic acid. */
export function dihydrateEquivalentGrams(anhydrousGrams: number): number {
  if (!Number.isFinite(anhydrousGrams) || anhydrousGrams < 0) {
    throw new RangeError(`anhydrous grams must be a finite number ≥ 0, got ${anhydrousGrams}`);
  }
  return anhydrousGrams / ANHYDROUS_PER_DIHYDRATE;
}

/** Oxalic acid dihydrate melts (in its water of crystallisation), °C. */
export const DIHYDRATE_MELTING_POINT_C = 101.5;
/** Anhydrous oxalic acid sublimes from about this temperature, °C. */
export const ANHYDROUS_SUBLIMATION_POINT_C = 157;
/** Anhydrous oxalic acid decomposes (to CO2, CO, H2O) from about this temperature, °C. */
export const ANHYDROUS_DECOMPOSITION_POINT_C = 189.5;
/** The block temperature band vaporizer users commonly work at (common practice), °C. */
export const COMMON_BLOCK_BAND_C = { minC: 230, maxC: 240 } as const;

/** One finding about a vaporizer block temperature band. */
export interface VaporizerBandProblem {
  /** Which end of the band the finding is about. */
  field: "minC" | "maxC";
  /** "error": the band cannot work; "warning": it can, but is outside common practice. */
  severity: "error" | "warning";
  message: string;
}

/**
 * Checks a vaporizer block temperature band and returns its problems (empty when fine).
 *
 * Errors: a non-finite end; min not below max; a band reaching down to the dihydrate's
 * melting point (101.5 °C) or the anhydrous acid's sublimation point (~157 °C) — a block
 * that cool would only melt or slowly dry the crystals instead of vaporizing the dose.
 *
 * Deliberately NOT an error: lying above the decomposition point (~189.5 °C). Vaporizers
 * are run at about 230–240 °C so the whole dose flashes off in 30–40 s; the small loss
 * to decomposition during that short time is accepted in practice, and a block below
 * ~190 °C would sublime too slowly. Instead a warning is given when any part of the band
 * lies outside the common 230–240 °C band, telling the business to follow its
 * vaporizer maker's instructions (warnings never block saving).
 */
export function checkVaporizerBand(band: { minC: number; maxC: number }): VaporizerBandProblem[] {
  const problems: VaporizerBandProblem[] = [];
  const { minC, maxC } = band;
  if (!Number.isFinite(minC)) {
    problems.push({ field: "minC", severity: "error", message: "Enter the lowest block temperature as a number." });
  }
  if (!Number.isFinite(maxC)) {
    problems.push({ field: "maxC", severity: "error", message: "Enter the highest block temperature as a number." });
  }
  if (problems.length > 0) return problems;

  if (minC >= maxC) {
    problems.push({
      field: "maxC",
      severity: "error",
      message: "The highest block temperature must be above the lowest.",
    });
  }
  if (minC <= DIHYDRATE_MELTING_POINT_C) {
    problems.push({
      field: "minC",
      severity: "error",
      message: `The block must run above ${DIHYDRATE_MELTING_POINT_C} °C, where oxalic acid dihydrate only melts; it vaporizes above about ${ANHYDROUS_SUBLIMATION_POINT_C} °C.`,
    });
  } else if (minC <= ANHYDROUS_SUBLIMATION_POINT_C) {
    problems.push({
      field: "minC",
      severity: "error",
      message: `The block must run above about ${ANHYDROUS_SUBLIMATION_POINT_C} °C, where oxalic acid starts to sublime; below it the dose does not vaporize.`,
    });
  }
  if (problems.some((p) => p.severity === "error")) return problems;

  if (minC < COMMON_BLOCK_BAND_C.minC) {
    problems.push({
      field: "minC",
      severity: "warning",
      message: `Below the common ${COMMON_BLOCK_BAND_C.minC}–${COMMON_BLOCK_BAND_C.maxC} °C band a dose takes longer to vaporize; follow your vaporizer maker's instructions.`,
    });
  }
  if (maxC > COMMON_BLOCK_BAND_C.maxC) {
    problems.push({
      field: "maxC",
      severity: "warning",
      message: `Above the common ${COMMON_BLOCK_BAND_C.minC}–${COMMON_BLOCK_BAND_C.maxC} °C band more of the acid decomposes instead of vaporizing; follow your vaporizer maker's instructions.`,
    });
  }
  return problems;
}
