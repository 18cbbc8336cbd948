/**
 * Guards on a course of treatment: rounds must outlast the capped-brood period, a colony
 * gets no more applications in a season than the business allows, and the air temperature
 * at the hive is compared with the business's band. Pure.
 */

import { addCalendarDays, calendarDaysBetween } from "./courses";
import { formatTemperature, type UnitSystem } from "./units";

/**
 * Days a worker cell stays capped (egg 3 d, open larva 6 d, capped 12 d, 21 d in all).
 * Vapor does not reach mites under cappings, so a course on a colony with brood must run at
 * least this long: a cell capped just after the first round has opened by the last one.
 */
export const CAPPED_BROOD_DAYS = 12;

/** Days from the first round to the last of a planned course (0 for one round). */
export function plannedCourseSpanDays(rounds: number, intervalDays: number): number {
  if (!Number.isInteger(rounds) || rounds < 1) throw new RangeError(`rounds must be a whole number ≥ 1, got ${rounds}`);
  return (rounds - 1) * intervalDays;
}

/** Why a planned course with brood is too short, or null when it spans the capped-brood period. */
export function plannedCourseSpanProblem(rounds: number, intervalDays: number): string | null {
  const span = plannedCourseSpanDays(rounds, intervalDays);
  if (span >= CAPPED_BROOD_DAYS) return null;
  const planned = rounds === 1 ? "One round spans 0 days" : `${rounds} rounds ${intervalDays} days apart span ${span} days`;
  return `${planned}; a course with brood must span at least ${CAPPED_BROOD_DAYS} days, the time a worker cell stays capped, so that the last round reaches the mites sealed in at the first.`;
}

/**
 * Why the dates of a course's rounds (in order, with brood) no longer span the capped-brood
 * period, or null when they do. One round alone is a broodless course and has no span to keep.
 */
export function courseDatesSpanProblem(dates: readonly string[]): string | null {
  if (dates.length < 2) return null;
  const sorted = [...dates].sort();
  const span = calendarDaysBetween(sorted[0], sorted[sorted.length - 1]);
  if (span >= CAPPED_BROOD_DAYS) return null;
  return `The rounds would run from ${sorted[0]} to ${sorted[sorted.length - 1]}, ${span} days; rounds on a colony with brood must span at least ${CAPPED_BROOD_DAYS} days, the time a worker cell stays capped.`;
}

/**
 * Days a course will span: from its earliest round on the calendar to its last, where rounds
 * not yet on the calendar (the next round is made when the one before it is finished) follow
 * the last one at the course's interval.
 */
export function projectedCourseSpanDays(dates: readonly string[], roundsPlanned: number, intervalDays: number): number {
  if (dates.length === 0) return 0;
  const sorted = [...dates].sort();
  const missing = Math.max(0, roundsPlanned - sorted.length);
  const last = addCalendarDays(sorted[sorted.length - 1], missing * Math.max(0, Math.trunc(intervalDays)));
  return calendarDaysBetween(sorted[0], last);
}

/** Why one more application would pass the season's cap for a colony, or null when it may be given. */
export function applicationCapProblem(colonyLabel: string, alreadyThisSeason: number, cap: number): string | null {
  if (alreadyThisSeason < cap) return null;
  return `Colony ${colonyLabel} has had ${alreadyThisSeason} ${alreadyThisSeason === 1 ? "application" : "applications"} this season, the most the business allows per colony (${cap}). Skip it and tell the office.`;
}

/** Air temperatures a crew may record at all, °C (anything else is a typing slip). */
export const AIR_TEMP_MIN_C = -50;
export const AIR_TEMP_MAX_C = 60;

/** The business's air temperature band for treating, in °C. */
export interface AirTemperatureBand {
  airTempMinC: number;
  airTempMaxC: number;
}

/**
 * A warning when the air temperature lies outside the band (both ends allowed), else null;
 * in the units the crew reads (°F for US units), though the band and the check are in °C.
 */
export function airTemperatureWarning(tempC: number, band: AirTemperatureBand, system: UnitSystem = "metric"): string | null {
  if (!Number.isFinite(tempC)) throw new RangeError(`temperature must be a finite number, got ${tempC}`);
  const number = (celsius: number) => formatTemperature(celsius, system).replace(/ °[CF]$/, "");
  const unit = system === "metric" ? "°C" : "°F";
  const bandText = `(${number(band.airTempMinC)}–${number(band.airTempMaxC)} ${unit})`;
  const side = tempC < band.airTempMinC ? "below" : tempC > band.airTempMaxC ? "above" : null;
  if (side) {
    return `${formatTemperature(tempC, system)} is ${side} the business's band for treating ${bandText}. Treat only if the label and your judgement allow it.`;
  }
  return null;
}
