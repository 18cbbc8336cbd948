/**
 * How much a service day can take, before its routes are planned: colonies, and grams of
 * oxalic acid dihydrate.
 *
 * Bookings are taken weeks ahead, when the day's route does not exist yet, so the room
 * left on a day is estimated: each crew's working day is filled with "typical" yards
 * (the business's typical colonies per yard), each costing its service time (set-up,
 * doses, the final entrance wait; see service-time.ts) plus the average drive between
 * yards, with one more drive back at the end of the day. Leftover time takes a smaller
 * yard if one fits. A typical colony takes as many vaporizer loads as most colonies on the
 * business's books do (typicalLoadsPerColony): where doses run above one load, the day
 * takes fewer colonies. The route planner later uses real drive times and may defer what
 * does not fit after all; the estimate errs on the side of what a crew can really do.
 *
 * A crew may have limits of its own per day: at most so many colonies, and at most so many
 * grams. Two figures hold them:
 * - Colonies: its estimate is capped at its colony limit and at its gram limit over the
 *   LEAST dose a colony can take (one box of the box type with the smallest rate), so the
 *   colony figure stays an upper bound whatever the yards' boxes are.
 * - Grams, exactly: the day's gram capacity is the working crews' gram limits added up; the
 *   grams booked are each visit's colonies × its yard's dose per colony (box type's rate ×
 *   brood boxes), so a yard of two medium boxes a colony takes what it really needs. When a
 *   working crew has no gram limit, that crew can take whatever grams the others cannot, so
 *   grams do not bind the day (null). A day no crew works has no gram bound either: its
 *   room is whatever colony figure the dispatcher set.
 * A booking must fit both.
 *
 * Which crews count on a date: active crews whose working weekdays include the date's
 * weekday and whose own day is not closed; none when the whole day is closed.
 */
import { doseGramsForColonyOfType, DOSE_RATE_FIELD, BOX_TYPES, type BoxDoseRates, type BoxType } from "./box-types";
import { centigramsToGrams, doseGramsForColony, gramsToCentigrams } from "./dose";
import { serviceMinutesForYard, type HiveCycle } from "./service-time";

export interface CapacitySettings extends HiveCycle {
  setupMinutes: number;
  typicalColoniesPerYard: number;
  averageDriveMinutesBetweenYards: number;
  /**
   * Grams per box of each type (deep, medium, nuc); needed only to turn a crew's gram limit
   * into colonies, at the least of them (see leastColonyDoseGrams).
   */
  doseGramsPerBroodBox?: number;
  doseGramsPerMediumBox?: number;
  doseGramsPerNucBox?: number;
  /** Vaporizer loads a typical colony's dose takes (1 when not given; see typicalLoadsPerColony). */
  loadsPerTypicalColony?: number;
}

export interface CrewForCapacity {
  workMinutes: number;
  vaporizers: number;
  /** The most colonies the crew treats in a day (null or absent: no limit). */
  maxColoniesPerDay?: number | null;
  /** The most grams the crew applies in a day (null or absent: no limit). */
  maxDoseGramsPerDay?: number | null;
}

// ---------------------------------------------------------------------------------------
// Weekdays

/** ISO weekdays, Monday first: number (1 = Monday … 7 = Sunday), short and long name. */
export const WEEKDAYS = [
  { day: 1, short: "Mon", name: "Monday" },
  { day: 2, short: "Tue", name: "Tuesday" },
  { day: 3, short: "Wed", name: "Wednesday" },
  { day: 4, short: "Thu", name: "Thursday" },
  { day: 5, short: "Fri", name: "Friday" },
  { day: 6, short: "Sat", name: "Saturday" },
  { day: 7, short: "Sun", name: "Sunday" },
] as const;

/** ISO weekday (1 = Monday … 7 = Sunday) of a YYYY-MM-DD date, counted in UTC so no zone shifts it. */
export function isoWeekdayOf(isoDate: string): number {
  const match = /^(\d{4})-(\d{2})-(\d{2})$/.exec(isoDate);
  if (!match) throw new RangeError(`expected a date YYYY-MM-DD, got ${JSON.stringify(isoDate)}`);
  const day = new Date(Date.UTC(Number(match[1]), Number(match[2]) - 1, Number(match[3]))).getUTCDay();
  return day === 0 ? 7 : day;
}

/** "Mon–Fri", "Mon–Sat", "Mon, Wed, Fri", "Every day", "No day" for a set of ISO weekdays. */
export function weekdaysLabel(days: readonly number[]): string {
  const set = [...new Set(days)].filter((d) => d >= 1 && d <= 7).sort((a, b) => a - b);
  if (set.length === 7) return "Every day";
  if (set.length === 0) return "No day";
  const consecutive = set.every((d, i) => i === 0 || d === set[i - 1] + 1);
  const short = (d: number) => WEEKDAYS[d - 1].short;
  if (consecutive && set.length >= 3) return `${short(set[0])}–${short(set.at(-1)!)}`;
  return set.map(short).join(", ");
}

/** What decides whether a crew works on a date. */
export interface CrewCalendar {
  active: boolean;
  /** ISO weekdays the crew works. */
  workingWeekdays: readonly number[];
}

/** Whether a crew works on a date: active, on one of its weekdays, its own day not closed, the whole day not closed. */
export function crewWorksOn(crew: CrewCalendar, isoDate: string, closures: { dayClosed: boolean; crewDayClosed: boolean }): boolean {
  if (!crew.active || closures.dayClosed || closures.crewDayClosed) return false;
  return crew.workingWeekdays.includes(isoWeekdayOf(isoDate));
}

// ---------------------------------------------------------------------------------------
// Capacity

/**
 * The least dose a colony can take: one box of the type with the smallest rate among the
 * rates given (undefined when none is). A gram limit over it is the most colonies the grams
 * could ever cover, whatever boxes the yards have.
 */
export function leastColonyDoseGrams(rates: Partial<BoxDoseRates>): number | undefined {
  const given = BOX_TYPES.map((t) => rates[DOSE_RATE_FIELD[t]]).filter((r): r is number => r != null && Number.isFinite(r) && r > 0);
  if (given.length === 0) return undefined;
  return doseGramsForColony(1, Math.min(...given));
}

/**
 * The most colonies a crew's own limits allow in a day (Infinity without limits): its colony
 * limit, and its gram limit over `leastDoseGramsPerColony` (leastColonyDoseGrams).
 */
export function crewColonyLimit(crew: Pick<CrewForCapacity, "maxColoniesPerDay" | "maxDoseGramsPerDay">, leastDoseGramsPerColony: number | undefined): number {
  let limit = Infinity;
  if (crew.maxColoniesPerDay != null) limit = Math.max(0, Math.floor(crew.maxColoniesPerDay));
  if (crew.maxDoseGramsPerDay != null && leastDoseGramsPerColony != null && leastDoseGramsPerColony > 0) {
    // In whole centigrams, as doses are kept (dose.ts), so 10 g ÷ 1 g is 10, never 9.999….
    const perColony = gramsToCentigrams(leastDoseGramsPerColony);
    if (perColony > 0) limit = Math.min(limit, Math.floor(gramsToCentigrams(crew.maxDoseGramsPerDay) / perColony));
  }
  return limit;
}

/** Colonies one crew can treat in its working day: the estimate above, capped at its own limits. */
export function crewDayCapacityColonies(crew: CrewForCapacity, settings: CapacitySettings): number {
  return Math.min(crewDayEstimate(crew, settings), crewColonyLimit(crew, leastColonyDoseGrams(settings)));
}

function crewDayEstimate(crew: CrewForCapacity, settings: CapacitySettings): number {
  if (!Number.isFinite(crew.workMinutes) || crew.workMinutes <= 0) return 0;
  const drive = settings.averageDriveMinutesBetweenYards;
  let minutesLeft = crew.workMinutes - drive; // the drive home at the end of the day
  const loadsPerColony = settings.loadsPerTypicalColony ?? 1;
  const yardMinutes = (colonies: number) =>
    serviceMinutesForYard({ ...settings, colonies, vaporizers: crew.vaporizers, loadsPerColony }) + drive;
  const typical = settings.typicalColoniesPerYard;
  const typicalMinutes = yardMinutes(typical);
  let colonies = 0;
  if (typicalMinutes > 0) {
    const yards = Math.max(0, Math.floor(minutesLeft / typicalMinutes));
    colonies += yards * typical;
    minutesLeft -= yards * typicalMinutes;
  }
  // A smaller last yard in the time that is left.
  let extra = 0;
  while (extra + 1 < typical && yardMinutes(extra + 1) <= minutesLeft) extra++;
  return colonies + extra;
}

/**
 * Vaporizer loads a typical colony takes, from the yards on the books (each yard's colonies
 * and the loads one of its colonies is planned with): the median over the colonies, the
 * higher of the two middle ones when they split evenly, so the estimate errs on the side of
 * the time a crew really needs. 1 when there is no colony.
 */
export function typicalLoadsPerColony(yards: readonly { colonies: number; loadsPerColony: number }[]): number {
  const counted = yards.filter((y) => y.colonies > 0);
  for (const y of counted) {
    if (!Number.isInteger(y.colonies)) throw new RangeError(`colonies must be a whole number ≥ 0, got ${y.colonies}`);
    if (!Number.isInteger(y.loadsPerColony) || y.loadsPerColony < 1) throw new RangeError(`loads per colony must be a whole number ≥ 1, got ${y.loadsPerColony}`);
  }
  const total = counted.reduce((sum, y) => sum + y.colonies, 0);
  if (total === 0) return 1;
  const sorted = [...counted].sort((a, b) => a.loadsPerColony - b.loadsPerColony);
  let seen = 0;
  for (const y of sorted) {
    seen += y.colonies;
    if (seen * 2 > total) return y.loadsPerColony;
  }
  return sorted.at(-1)!.loadsPerColony; // not reached: the last yard brings `seen` to `total`
}

export interface ServiceDayState {
  /** A dispatcher's fixed capacity for the day, overriding the estimate. */
  capacityOverride: number | null;
  closed: boolean;
}

/**
 * Colonies the whole day can take, from the crews working that day: the dispatcher's figure
 * (never above what the crews' own limits allow together), or the crews' estimates added up.
 * A figure set for a day no crew works stands as set: the dispatcher may be about to add one.
 */
export function dayCapacityColonies(crews: readonly CrewForCapacity[], settings: CapacitySettings, day?: ServiceDayState): number {
  if (day?.closed) return 0;
  if (day?.capacityOverride != null) {
    if (crews.length === 0) return day.capacityOverride;
    const least = leastColonyDoseGrams(settings);
    const limits = crews.reduce((sum, crew) => sum + crewColonyLimit(crew, least), 0);
    return Math.min(day.capacityOverride, limits);
  }
  return crews.reduce((sum, crew) => sum + crewDayCapacityColonies(crew, settings), 0);
}

/** Colonies that still fit on a day (never below 0). */
export function coloniesStillFitting(capacity: number, booked: number): number {
  return Math.max(0, capacity - booked);
}

// ---------------------------------------------------------------------------------------
// Grams

/**
 * Grams the whole day's crews can apply: their gram limits added up (to 0.01 g). Null when
 * grams do not bind the day: a working crew without a gram limit can take what the others
 * cannot, and a day no crew works has only the dispatcher's colony figure. A closed day: 0.
 */
export function dayCapacityGrams(crews: readonly Pick<CrewForCapacity, "maxDoseGramsPerDay">[], day?: Pick<ServiceDayState, "closed">): number | null {
  if (day?.closed) return 0;
  if (crews.length === 0) return null;
  let centigrams = 0;
  for (const crew of crews) {
    if (crew.maxDoseGramsPerDay == null) return null;
    centigrams += Math.max(0, gramsToCentigrams(crew.maxDoseGramsPerDay));
  }
  return centigramsToGrams(centigrams);
}

/** Grams that still fit on a day (never below 0); null when grams do not bind it. */
export function gramsStillFitting(capacity: number | null, booked: number): number | null {
  if (capacity == null) return null;
  return centigramsToGrams(Math.max(0, gramsToCentigrams(capacity) - gramsToCentigrams(booked)));
}

/** Whether `adding` grams fit in `remaining` (null: no gram bound), compared in centigrams. */
export function gramsFit(adding: number, remaining: number | null): boolean {
  return remaining == null || gramsToCentigrams(adding) <= gramsToCentigrams(remaining);
}

/** What a yard's dose per colony depends on. */
export interface YardDoseShape {
  boxType: BoxType;
  broodBoxesPerColony: number;
}

/** Grams one colony of the yard takes: its brood boxes × its box type's rate, to 0.01 g. */
export function yardDoseGramsPerColony(yard: YardDoseShape, rates: BoxDoseRates): number {
  return doseGramsForColonyOfType(yard.broodBoxesPerColony, yard.boxType, rates);
}

/** Grams for some colonies of a yard (colonies × its dose per colony), to 0.01 g. */
export function gramsForColonies(colonies: number, yard: YardDoseShape, rates: BoxDoseRates): number {
  return centigramsToGrams(colonies * gramsToCentigrams(yardDoseGramsPerColony(yard, rates)));
}

/** Grams a day's visits take: the sum of gramsForColonies over them, to 0.01 g. */
export function gramsBookedFor(visits: readonly (YardDoseShape & { colonies: number })[], rates: BoxDoseRates): number {
  const centigrams = visits.reduce((sum, v) => sum + v.colonies * gramsToCentigrams(yardDoseGramsPerColony(v, rates)), 0);
  return centigramsToGrams(centigrams);
}

// ---------------------------------------------------------------------------------------
// A day that lost room

/** A visit on a day whose room shrank: its colonies (and grams), and whether it may be moved to another day. */
export interface VisitTakingRoom {
  id: number;
  colonies: number;
  /** Grams the visit takes (colonies × its yard's dose per colony); absent counts as 0. */
  grams?: number;
  /** False for a visit under way or done, or one that must stay for another reason. */
  movable: boolean;
}

/**
 * Which visits stay on a day of `capacity` colonies (and `gramsCapacity` grams; null or
 * absent: grams do not bind the day) and which must move: visits that cannot move stay
 * first; the others stay in the order given (booking order: first booked, first kept) as
 * long as both their colonies and their grams still fit, and move otherwise. A later,
 * smaller visit may stay where an earlier, bigger one did not fit. Grams are compared in
 * whole centigrams, as doses are kept.
 */
export function visitsBeyondCapacity(
  capacity: number,
  visits: readonly VisitTakingRoom[],
  gramsCapacity: number | null = null,
): { stay: number[]; move: number[] } {
  const centigramsOf = (v: VisitTakingRoom) => gramsToCentigrams(v.grams ?? 0);
  const fixed = visits.filter((v) => !v.movable);
  let taken = fixed.reduce((sum, v) => sum + v.colonies, 0);
  let takenCentigrams = fixed.reduce((sum, v) => sum + centigramsOf(v), 0);
  const centigramCapacity = gramsCapacity == null ? null : gramsToCentigrams(gramsCapacity);
  const stay = fixed.map((v) => v.id);
  const move: number[] = [];
  for (const visit of visits) {
    if (!visit.movable) continue;
    const gramsFitToo = centigramCapacity == null || takenCentigrams + centigramsOf(visit) <= centigramCapacity;
    if (taken + visit.colonies <= capacity && gramsFitToo) {
      taken += visit.colonies;
      takenCentigrams += centigramsOf(visit);
      stay.push(visit.id);
    } else {
      move.push(visit.id);
    }
  }
  return { stay, move };
}
