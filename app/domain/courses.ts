/**
 * Course planning: how many treatment rounds a yard needs and on which service days.
 *
 * Service days are calendar dates written as ISO strings ("YYYY-MM-DD"), never instants.
 * All date arithmetic here counts whole calendar days on a UTC day number, so neither
 * daylight-saving changes nor month or year ends can shift a date; local-time `Date`
 * arithmetic (setDate on a local date, adding 86 400 000 ms to a local midnight) is never
 * used.
 */

const ISO_DATE = /^(\d{4})-(\d{2})-(\d{2})$/;
const MS_PER_DAY = 86_400_000;

/** Day number (days since 1970-01-01) of an ISO date, or undefined when it is not a real date. */
function dayNumberOf(isoDate: string): number | undefined {
  const match = ISO_DATE.exec(isoDate);
  if (!match) return undefined;
  const year = Number(match[1]);
  const month = Number(match[2]);
  const day = Number(match[3]);
  const date = new Date(0);
  date.setUTCFullYear(year, month - 1, day); // setUTCFullYear keeps years 0–99 literal
  if (date.getUTCFullYear() !== year || date.getUTCMonth() !== month - 1 || date.getUTCDate() !== day) {
    return undefined; // e.g. 2026-02-30 rolled over
  }
  return Math.round(date.getTime() / MS_PER_DAY);
}

function isoDateOf(dayNumber: number): string {
  const date = new Date(dayNumber * MS_PER_DAY);
  const year = date.getUTCFullYear();
  if (year < 0 || year > 9999) throw new RangeError(`date out of range (year ${year})`);
  const yyyy = String(year).padStart(4, "0");
  const mm = String(date.getUTCMonth() + 1).padStart(2, "0");
  const dd = String(date.getUTCDate()).padStart(2, "0");
  return `${yyyy}-${mm}-${dd}`;
}

function requireDayNumber(isoDate: string, what = "date"): number {
  const n = dayNumberOf(isoDate);
  if (n === undefined) throw new RangeError(`${what} must be a calendar date YYYY-MM-DD, got ${JSON.stringify(isoDate)}`);
  return n;
}

/** True when the text is a real calendar date written YYYY-MM-DD. */
export function isIsoDate(text: string): boolean {
  return typeof text === "string" && dayNumberOf(text) !== undefined;
}

/** The calendar date a whole number of days after (or before, if negative) an ISO date. */
export function addCalendarDays(isoDate: string, days: number): string {
  if (!Number.isInteger(days)) throw new RangeError(`days must be a whole number, got ${days}`);
  return isoDateOf(requireDayNumber(isoDate) + days);
}

/** Whole calendar days from one ISO date to another (negative when `to` is earlier). */
export function calendarDaysBetween(from: string, to: string): number {
  return requireDayNumber(to, "to") - requireDayNumber(from, "from");
}

/** Month (1–12) of an ISO date. */
export function monthOfIsoDate(isoDate: string): number {
  requireDayNumber(isoDate);
  return Number(isoDate.slice(5, 7));
}

/** Whether a yard's colonies have brood; "unknown" is planned as brood. */
export type BroodStatus = "brood" | "broodless" | "unknown";

/** A round's state, the same states a visit has. */
export type RoundStatus = "scheduled" | "deferred" | "in_progress" | "done" | "cancelled";

/** One treatment round of a course. */
export interface CourseRound {
  /** 1, 2, 3 … in treatment order. */
  roundNumber: number;
  /** Service day, YYYY-MM-DD. */
  date: string;
  status: RoundStatus;
}

/**
 * Rounds a course needs: one for a broodless colony; `roundsWithBrood` with brood.
 * "unknown" counts as brood: oxalic acid vapor does not reach mites under brood cappings
 * (EU summary of product characteristics, oxalic acid dihydrate beehive product), so one
 * round on a colony that in fact has brood would leave the mites in capped cells untreated,
 * while extra rounds on a broodless colony only cost a visit.
 */
export function roundsNeeded(broodStatus: BroodStatus, roundsWithBrood: number): number {
  if (!Number.isInteger(roundsWithBrood) || roundsWithBrood < 1) {
    throw new RangeError(`rounds with brood must be a whole number ≥ 1, got ${roundsWithBrood}`);
  }
  return broodStatus === "broodless" ? 1 : roundsWithBrood;
}

/** Plans a course: its rounds, all "scheduled", from the first date at a fixed interval in calendar days. */
export function planCourse(input: {
  broodStatus: BroodStatus;
  firstDate: string;
  roundsWithBrood: number;
  intervalDays: number;
}): CourseRound[] {
  const count = roundsNeeded(input.broodStatus, input.roundsWithBrood);
  const first = requireDayNumber(input.firstDate, "first date");
  if (count > 1 && (!Number.isInteger(input.intervalDays) || input.intervalDays < 1)) {
    throw new RangeError(`interval must be a whole number of days ≥ 1, got ${input.intervalDays}`);
  }
  const rounds: CourseRound[] = [];
  for (let i = 0; i < count; i++) {
    rounds.push({ roundNumber: i + 1, date: isoDateOf(first + i * input.intervalDays), status: "scheduled" });
  }
  return rounds;
}

/** True when the course has rounds and every one of them is done (a cancelled round leaves it incomplete). */
export function isCourseComplete(rounds: readonly CourseRound[]): boolean {
  return rounds.length > 0 && rounds.every((round) => round.status === "done");
}

/** The earliest round still to be carried out (scheduled, deferred or in progress), if any. */
export function nextOpenRound(rounds: readonly CourseRound[]): CourseRound | undefined {
  return [...rounds]
    .sort((a, b) => a.roundNumber - b.roundNumber)
    .find((round) => round.status === "scheduled" || round.status === "deferred" || round.status === "in_progress");
}

/**
 * Moves one round to a new date and every later round by the same number of days, so the
 * intervals after it are kept (used when a round is skipped — weather, access — and
 * carried out later, or brought forward). Returns new rounds in round order.
 * The moved round must not be done, in progress or cancelled; no later round may be done or
 * in progress; the new date must fall after the previous round's date.
 */
export function rescheduleFollowingRounds(
  rounds: readonly CourseRound[],
  roundNumber: number,
  newDate: string,
): CourseRound[] {
  const sorted = [...rounds].sort((a, b) => a.roundNumber - b.roundNumber);
  const index = sorted.findIndex((round) => round.roundNumber === roundNumber);
  if (index < 0) throw new RangeError(`no round ${roundNumber} in this course`);
  const moved = sorted[index];
  if (moved.status === "done" || moved.status === "in_progress" || moved.status === "cancelled") {
    throw new RangeError(`round ${roundNumber} is ${moved.status.replace("_", " ")} and cannot be moved`);
  }
  const shift = calendarDaysBetween(moved.date, newDate);
  const previous = sorted[index - 1];
  if (previous && calendarDaysBetween(previous.date, newDate) <= 0) {
    throw new RangeError(`round ${roundNumber} must come after round ${previous.roundNumber} (${previous.date})`);
  }
  const later = sorted.slice(index + 1);
  const started = later.find((round) => round.status === "done" || round.status === "in_progress");
  if (started) throw new RangeError(`round ${started.roundNumber} is already ${started.status.replace("_", " ")}`);

  return sorted.map((round, i) =>
    i < index ? { ...round } : { ...round, date: addCalendarDays(round.date, shift) },
  );
}

/** Postpones a round by a number of days, moving the later rounds with it (see rescheduleFollowingRounds). */
export function postponeRound(rounds: readonly CourseRound[], roundNumber: number, days: number): CourseRound[] {
  const round = rounds.find((r) => r.roundNumber === roundNumber);
  if (!round) throw new RangeError(`no round ${roundNumber} in this course`);
  return rescheduleFollowingRounds(rounds, roundNumber, addCalendarDays(round.date, days));
}
