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

/** Decimals a mite load (and a threshold) is shown with: "3.0 per 100 bees". */
export const MITES_PER_100_DECIMALS = 1;

/** A mite load (or threshold) at the precision shown to people: 3.04 → 3, 13.87 → 13.9. */
export function mitesPer100AsShown(value: number): number {
  return roundTo(value, MITES_PER_100_DECIMALS);
}

/** Mites per 100 bees as shown to people: one decimal (43 in 310 → "13.9"). */
export function formatMitesPer100(value: number): string {
  return mitesPer100AsShown(value).toFixed(MITES_PER_100_DECIMALS);
}

/** Smallest wash sample taken as a volume: below a few spoonfuls an estimate means little. */
export const MIN_SAMPLE_ML = 10;
/** Largest wash sample taken as a volume (a litre jar is far past any scoop in use). */
export const MAX_SAMPLE_ML = 1000;

/** Bees in a sample from its volume, at a rule of so many bees per 100 mL (whole bees). */
export function beesFromSampleVolume(volumeMl: number, beesPer100Ml: number): number {
  if (!Number.isFinite(volumeMl) || volumeMl <= 0) throw new RangeError(`sample volume must be more than 0 mL, got ${volumeMl}`);
  if (!Number.isFinite(beesPer100Ml) || beesPer100Ml <= 0) {
    throw new RangeError(`bees per 100 mL must be more than 0, got ${beesPer100Ml}`);
  }
  return roundTo((volumeMl * beesPer100Ml) / 100, 0);
}

/** The bees of a wash sample: counted by the crew, or estimated from the sample's volume. */
export interface WashSampleBees {
  beesSampled: number;
  /** True when the bees were not counted but estimated from the volume. */
  beesEstimated: boolean;
  /** The sample's volume in mL, when the crew gave it. */
  sampleMl: number | null;
}

/**
 * The bees a wash count is divided by: the bees counted when the crew counted them (a count
 * beats any rule of thumb), otherwise the sample's volume at the business's bees per 100 mL.
 * Null when neither was given.
 */
export function washSampleBees(
  sample: { beesCounted: number | null; sampleMl: number | null },
  beesPer100Ml: number,
): WashSampleBees | null {
  if (sample.beesCounted !== null) {
    return { beesSampled: sample.beesCounted, beesEstimated: false, sampleMl: sample.sampleMl };
  }
  if (sample.sampleMl === null) return null;
  return { beesSampled: beesFromSampleVolume(sample.sampleMl, beesPer100Ml), beesEstimated: true, sampleMl: sample.sampleMl };
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
  /**
   * Mites per 100 bees as worked out, unrounded: round it only to show it (formatMitesPer100),
   * so the figure shown and the verdict come from one rounding of the same value.
   */
  mitesPer100: number;
  /** The threshold in force on the sample date. */
  threshold: number;
  level: MiteLoadLevel;
}

/**
 * Where a mite load stands against a threshold, compared as people read them: both rounded
 * to the shown precision first, so a load shown as "3.0 per 100 bees" is "at" a threshold of 3
 * (never "above" because the raw value was 3.04), and floating-point noise never counts.
 * Every comparison of a load with a threshold goes through here.
 */
export function miteLoadLevel(mitesPer100: number, threshold: number): MiteLoadLevel {
  if (!Number.isFinite(mitesPer100) || mitesPer100 < 0) throw new RangeError(`mites per 100 bees must be ≥ 0, got ${mitesPer100}`);
  if (!Number.isFinite(threshold) || threshold < 0) throw new RangeError(`threshold must be ≥ 0, got ${threshold}`);
  const load = mitesPer100AsShown(mitesPer100);
  const limit = mitesPer100AsShown(threshold);
  return load < limit ? "below" : load === limit ? "at" : "above";
}

/** True when a load is at or above a threshold, compared as shown (see miteLoadLevel). */
export function atOrAboveThreshold(mitesPer100: number, threshold: number): boolean {
  return miteLoadLevel(mitesPer100, threshold) !== "below";
}

/**
 * Assesses a wash or roll: mites per 100 bees against the threshold for the sample date's
 * month. The load is kept unrounded; the verdict compares it at the precision shown to
 * people (miteLoadLevel). Rounding it to 0.01 first would round twice: 53 in 1798 bees is
 * 2.948, shown "2.9" and below a threshold of 3, but 2.95 would show "3.0" and count as at it.
 */
export function assessMiteLoad(
  mites: number,
  beesSampled: number,
  isoDate: string,
  thresholds: readonly MiteThreshold[],
): MiteLoadAssessment {
  const load = mitesPer100Bees(mites, beesSampled);
  const threshold = roundTo(thresholdOn(isoDate, thresholds), 2);
  // Screens format this same unrounded figure, so what they show and the verdict agree.
  return { mitesPer100: load, threshold, level: miteLoadLevel(load, threshold) };
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
