/**
 * Doses of oxalic acid dihydrate: per colony, per yard, per visit, per run, per season.
 *
 * Rounding: every dose is carried as a whole number of centigrams (0.01 g — the precision
 * the tally stores) and converted back to grams at the end. A colony's dose is rounded
 * once, half away from zero; yard, visit, run and season totals are exact sums of those
 * rounded colony doses, so a run's total always equals the sum of what its tallies show,
 * with no binary floating-point drift (0.1 + 0.2 adds up to exactly 0.3 here).
 */

import { roundTo } from "./units";

/** Grams → whole centigrams (0.01 g), rounded half away from zero. */
export function gramsToCentigrams(grams: number): number {
  if (!Number.isFinite(grams)) throw new RangeError(`grams must be finite, got ${grams}`);
  // Round in decimal first (1.005 g → 1.01 g), then scale: the product is within a hair of
  // an integer, which Math.round snaps to. "+ 0" turns −0 into 0.
  return Math.round(roundTo(grams, 2) * 100) + 0;
}

/** Whole centigrams → grams. */
export function centigramsToGrams(centigrams: number): number {
  return centigrams / 100;
}

/** Rounds a mass to 0.01 g, the precision doses are kept at. */
export function roundDoseGrams(grams: number): number {
  return centigramsToGrams(gramsToCentigrams(grams));
}

function assertCount(value: number, what: string): void {
  if (!Number.isInteger(value) || value < 0) {
    throw new RangeError(`${what} must be a whole number ≥ 0, got ${value}`);
  }
}

function assertRate(value: number, what: string): void {
  if (!Number.isFinite(value) || value < 0) {
    throw new RangeError(`${what} must be a finite number ≥ 0, got ${value}`);
  }
}

/**
 * Brood boxes a living colony has at the least: the queen lays in a brood box, so a colony
 * with none is a dead-out or not a colony, and is never dosed.
 */
export const MIN_BROOD_BOXES = 1;

/**
 * Grams of oxalic acid dihydrate for one living colony: brood boxes × dose rate per brood
 * box. Refuses fewer than MIN_BROOD_BOXES and a rate of 0, so no colony is ever "treated"
 * with 0 g.
 */
export function doseGramsForColony(broodBoxes: number, doseGramsPerBroodBox: number): number {
  assertCount(broodBoxes, "brood boxes");
  if (broodBoxes < MIN_BROOD_BOXES) {
    throw new RangeError(`a living colony has at least ${MIN_BROOD_BOXES} brood box, got ${broodBoxes}`);
  }
  if (!Number.isFinite(doseGramsPerBroodBox) || doseGramsPerBroodBox <= 0) {
    throw new RangeError(`dose rate must be a finite number > 0, got ${doseGramsPerBroodBox}`);
  }
  return roundDoseGrams(broodBoxes * doseGramsPerBroodBox);
}

/** Grams for a yard whose colonies all have the same number of brood boxes (at least one). Zero colonies → 0. */
export function doseGramsForYard(
  yard: { colonies: number; broodBoxesPerColony: number },
  doseGramsPerBroodBox: number,
): number {
  assertCount(yard.colonies, "colonies");
  const perColony = gramsToCentigrams(doseGramsForColony(yard.broodBoxesPerColony, doseGramsPerBroodBox));
  return centigramsToGrams(yard.colonies * perColony);
}

/** Grams for one visit, from the brood boxes of each colony treated (one entry per colony). */
export function doseGramsForVisit(broodBoxesPerColony: readonly number[], doseGramsPerBroodBox: number): number {
  let centigrams = 0;
  for (const boxes of broodBoxesPerColony) {
    centigrams += gramsToCentigrams(doseGramsForColony(boxes, doseGramsPerBroodBox));
  }
  return centigramsToGrams(centigrams);
}

function sumDoseGrams(amounts: readonly number[], what: string): number {
  let centigrams = 0;
  for (const grams of amounts) {
    assertRate(grams, what);
    centigrams += gramsToCentigrams(grams);
  }
  return centigramsToGrams(centigrams);
}

/** Grams a crew must carry for a run: the sum of its visits' doses. */
export function doseGramsForRun(visitDoseGrams: readonly number[]): number {
  return sumDoseGrams(visitDoseGrams, "visit dose");
}

/** Grams used in a season: the sum of its runs' (or visits') doses. */
export function doseGramsForSeason(doseGrams: readonly number[]): number {
  return sumDoseGrams(doseGrams, "dose");
}

/** One problem with a dose rate; `aboveLabel` marks the one an owner may confirm. */
export interface DoseRateProblem {
  message: string;
  aboveLabel: boolean;
}

/**
 * Problems with a dose rate (empty when fine): it must be a positive number, and a rate
 * above the label maximum per brood box the business entered from its product label is
 * flagged (the settings save it only with the owner's confirmation). Compared in
 * centigrams, so 1.00 vs 1 is never a false alarm.
 */
export function doseRateProblems(doseGramsPerBroodBox: number, labelMaximumGramsPerBroodBox: number): DoseRateProblem[] {
  const problems: DoseRateProblem[] = [];
  if (!Number.isFinite(doseGramsPerBroodBox) || doseGramsPerBroodBox <= 0) {
    problems.push({ message: "The dose per brood box must be more than 0 g.", aboveLabel: false });
  }
  if (!Number.isFinite(labelMaximumGramsPerBroodBox) || labelMaximumGramsPerBroodBox <= 0) {
    problems.push({ message: "Enter the label's maximum dose per brood box (more than 0 g).", aboveLabel: false });
  }
  if (problems.length > 0) return problems;
  if (gramsToCentigrams(doseGramsPerBroodBox) > gramsToCentigrams(labelMaximumGramsPerBroodBox)) {
    problems.push({
      message: `The dose (${roundDoseGrams(doseGramsPerBroodBox)} g per box) exceeds the label maximum you entered (${roundDoseGrams(labelMaximumGramsPerBroodBox)} g). Follow the product label.`,
      aboveLabel: true,
    });
  }
  return problems;
}

/** True when a dose rate is positive and within the label maximum per brood box. */
export function isDoseRateWithinLabel(doseGramsPerBroodBox: number, labelMaximumGramsPerBroodBox: number): boolean {
  return doseRateProblems(doseGramsPerBroodBox, labelMaximumGramsPerBroodBox).length === 0;
}
