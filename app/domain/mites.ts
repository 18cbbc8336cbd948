/**
 * Mite load: mites per 100 bees from an alcohol wash or sugar roll, seasonal action
 * thresholds, and the efficacy of a course (before/after).
 */

import { monthOfIsoDate } from "./courses";
import { MILLILITRES_PER_US_CUP, roundTo } from "./units";

/** Millilitres in half a US cup, the popular sample scoop. */
export const HALF_US_CUP_ML = MILLILITRES_PER_US_CUP / 2;

/** Mites per 100 bees, unrounded: mites ÷ bees sampled × 100. */
export function mitesPer100Bees(mites: number, beesSampled: number): number {
  if (!Number.isInteger(mites) || mites < 0) throw new RangeError(`mites must be a whole number ≥ 0, got ${mites}`);
  if (!Number.isFinite(beesSampled) || beesSampled <= 0) {
    throw new RangeError(`bees sampled must be more than 0, got ${beesSampled}`);
  }
  // Multiply first: 9 × 100 / 300 is exactly 3, whereas 9 / 300 × 100 is 3.0000000000000004.
  return (mites * 100) / beesSampled;
}

/** Mites per 100 bees as shown to people: one decimal (43 in 310 → "13.9"). */
export function formatMitesPer100(value: number): string {
  return roundTo(value, 1).toFixed(1);
}

/** Bees in a sample from its volume, at a rule of so many bees per 100 mL (whole bees). */
export function beesFromSampleVolume(volumeMl: number, beesPer100Ml: number): number {
  if (!Number.isFinite(volumeMl) || volumeMl <= 0) throw new RangeError(`sample volume must be more than 0 mL, got ${volumeMl}`);
  if (!Number.isFinite(beesPer100Ml) || beesPer100Ml <= 0) {
    throw new RangeError(`bees per 100 mL must be more than 0, got ${beesPer100Ml}`);
  }
  return roundTo((volumeMl * beesPer100Ml) / 100, 0);
}

/** Converts a "half cup ≈ N bees" rule into bees per 100 mL (e.g. 300 per half cup ≈ 253.6 per 100 mL). */
export function beesPer100MlFromHalfCupRule(beesPerHalfCup: number): number {
  if (!Number.isFinite(beesPerHalfCup) || beesPerHalfCup <= 0) {
    throw new RangeError(`bees per half cup must be more than 0, got ${beesPerHalfCup}`);
  }
  return (beesPerHalfCup * 100) / HALF_US_CUP_ML;
}

/**
 * An action threshold for a span of months, both ends included. A span may run over the
 * year end: { fromMonth: 11, toMonth: 1 } is November, December and January.
 */
export interface MiteThreshold {
  fromMonth: number;
  toMonth: number;
  mitesPer100: number;
}

/** True when a month (1–12) falls in a threshold's span. */
export function monthInSpan(month: number, span: { fromMonth: number; toMonth: number }): boolean {
  if (span.fromMonth <= span.toMonth) return month >= span.fromMonth && month <= span.toMonth;
  return month >= span.fromMonth || month <= span.toMonth;
}

/** Months (1–12) not covered by any threshold. */
export function monthsWithoutThreshold(thresholds: readonly MiteThreshold[]): number[] {
  const months: number[] = [];
  for (let month = 1; month <= 12; month++) {
    if (!thresholds.some((t) => monthInSpan(month, t))) months.push(month);
  }
  return months;
}

/** Months (1–12) covered by more than one threshold. */
export function monthsWithSeveralThresholds(thresholds: readonly MiteThreshold[]): number[] {
  const months: number[] = [];
  for (let month = 1; month <= 12; month++) {
    if (thresholds.filter((t) => monthInSpan(month, t)).length > 1) months.push(month);
  }
  return months;
}

/** The action threshold (mites per 100 bees) on a date (YYYY-MM-DD); the first matching span wins. */
export function thresholdOn(isoDate: string, thresholds: readonly MiteThreshold[]): number {
  const month = monthOfIsoDate(isoDate);
  const match = thresholds.find((t) => monthInSpan(month, t));
  if (!match) throw new RangeError(`no mite threshold covers month ${month}`);
  return match.mitesPer100;
}

/** Where a mite load stands against the action threshold. */
export type MiteLoadLevel = "below" | "at" | "above";

/** A mite count assessed against the season's threshold. */
export interface MiteLoadAssessment {
  /** Mites per 100 bees, rounded to 0.01. */
  mitesPer100: number;
  /** The threshold in force on the sample date. */
  threshold: number;
  level: MiteLoadLevel;
}

/**
 * Assesses a wash or roll: mites per 100 bees against the threshold for the sample date's
 * month. Both figures are rounded to 0.01 before comparing, so a load that equals the
 * threshold in decimal arithmetic is "at", never "above" by floating-point noise.
 */
export function assessMiteLoad(
  mites: number,
  beesSampled: number,
  isoDate: string,
  thresholds: readonly MiteThreshold[],
): MiteLoadAssessment {
  const load = roundTo(mitesPer100Bees(mites, beesSampled), 2);
  const threshold = roundTo(thresholdOn(isoDate, thresholds), 2);
  const level: MiteLoadLevel = load < threshold ? "below" : load === threshold ? "at" : "above";
  return { mitesPer100: load, threshold, level };
}

/**
 * Efficacy of a course: percent fewer mites per 100 bees after than before
 * ((before − after) ÷ before × 100; negative when the load rose). Null when before is 0.
 */
export function percentReduction(before: number, after: number): number | null {
  if (!Number.isFinite(before) || before < 0) throw new RangeError(`before must be ≥ 0, got ${before}`);
  if (!Number.isFinite(after) || after < 0) throw new RangeError(`after must be ≥ 0, got ${after}`);
  if (before === 0) return null;
  return ((before - after) * 100) / before;
}
