/**
 * Box types of a colony's brood nest and the dose each takes.
 *
 * A colony lives in deep, medium or nuc (single, small) brood boxes. The dose is vaporized
 * per brood box, at the rate the business sets for the box type: a label gives its rate per
 * brood chamber (a deep), and a smaller box holds less air and fewer bees, so businesses
 * commonly give it less. Pure: the rates come from the settings.
 */

import { doseGramsForColony, gramsToCentigrams, MIN_BROOD_BOXES } from "./dose";

export { MIN_BROOD_BOXES };

export const BOX_TYPES = ["deep", "medium", "nuc"] as const;
export type BoxType = (typeof BOX_TYPES)[number];

/** Brood boxes a crew may record for one colony at the hive: MIN_BROOD_BOXES (dose.ts) up to this. */
export const MAX_BROOD_BOXES = 6;

/** Names as the crew and customers read them. */
export const BOX_TYPE_LABELS: Record<BoxType, string> = {
  deep: "Deep",
  medium: "Medium",
  nuc: "Nuc (small single box)",
};

/** The settings that hold a dose rate per box type. */
export interface BoxDoseRates {
  doseGramsPerBroodBox: number;
  doseGramsPerMediumBox: number;
  doseGramsPerNucBox: number;
}

/** The settings field that holds each box type's rate (deep boxes use the label's per-brood-box rate). */
export const DOSE_RATE_FIELD: Record<BoxType, keyof BoxDoseRates> = {
  deep: "doseGramsPerBroodBox",
  medium: "doseGramsPerMediumBox",
  nuc: "doseGramsPerNucBox",
};

export function isBoxType(value: unknown): value is BoxType {
  return typeof value === "string" && (BOX_TYPES as readonly string[]).includes(value);
}

/** A stored box type (the columns are checked to one of the types); deep, the label's own box, if ever not. */
export function boxTypeOrDeep(value: unknown): BoxType {
  return isBoxType(value) ? value : "deep";
}

/** Grams per brood box of a type, from the business's rates. */
export function doseRateForBoxType(rates: BoxDoseRates, boxType: BoxType): number {
  return rates[DOSE_RATE_FIELD[boxType]];
}

/** Grams for one colony of a box type: brood boxes × that type's rate, to 0.01 g. */
export function doseGramsForColonyOfType(broodBoxes: number, boxType: BoxType, rates: BoxDoseRates): number {
  return doseGramsForColony(broodBoxes, doseRateForBoxType(rates, boxType));
}

/**
 * Vaporizer loads one colony's dose takes: a vaporizer holds at most `loadGrams` a load, so a
 * bigger dose is given in several loads, one after another (each needs the block back at
 * temperature). A dose of 0 takes no load.
 */
export function vaporizerLoadsForDose(doseGrams: number, loadGrams: number): number {
  if (!Number.isFinite(doseGrams) || doseGrams < 0) throw new RangeError(`dose must be a finite number ≥ 0, got ${doseGrams}`);
  if (!Number.isFinite(loadGrams) || loadGrams <= 0) throw new RangeError(`load must be more than 0 g, got ${loadGrams}`);
  // In centigrams, so 2.00 g in a 2 g load is one load, never two by float drift.
  const dose = gramsToCentigrams(doseGrams);
  const load = gramsToCentigrams(loadGrams);
  return dose === 0 ? 0 : Math.ceil(dose / load);
}

/** The sentence that tells the crew how a colony's dose was worked out. */
export function doseAssumption(input: { broodBoxes: number; boxType: BoxType; rates: BoxDoseRates; loadGrams: number }): string {
  const rate = doseRateForBoxType(input.rates, input.boxType);
  const grams = doseGramsForColonyOfType(input.broodBoxes, input.boxType, input.rates);
  const loads = vaporizerLoadsForDose(grams, input.loadGrams);
  const boxes = `${input.broodBoxes} ${input.boxType === "nuc" ? "nuc" : input.boxType} brood ${input.broodBoxes === 1 ? "box" : "boxes"}`;
  return `${boxes} × ${rate} g = ${grams} g, in ${loads} vaporizer ${loads === 1 ? "load" : "loads"} of at most ${input.loadGrams} g`;
}
