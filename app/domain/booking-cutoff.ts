/**
 * When a customer may still change a booked visit themselves, and to which days.
 *
 * The cut-off is counted in real hours back from the start of the visit's service day on
 * the business's wall clock (local midnight in the business time zone, from settings), so a
 * night on which the clocks change is counted as the hours it really lasts: 48 hours before
 * a Monday that follows a spring-forward Sunday is 23:00 on the Friday before, not midnight.
 * After the cut-off the crew's day is being planned and the customer calls the business.
 */

import { addCalendarDays, calendarDaysBetween } from "./courses";
import { zonedCalendarDate, zonedDateTimeToInstant } from "./zoned-time";

const HOUR_MS = 3_600_000;

function requireCutoffHours(hours: number): number {
  if (!Number.isInteger(hours) || hours < 0) throw new RangeError(`cut-off hours must be a whole number ≥ 0, got ${hours}`);
  return hours;
}

/** The instant a service day begins in the zone (its local midnight, or the first instant after a skipped midnight). */
export function serviceDayStart(serviceDate: string, timeZone: string): Date {
  return zonedDateTimeToInstant(serviceDate, 0, timeZone);
}

/** The last instant (exclusive) at which a customer may change a visit on `serviceDate`. */
export function changeDeadline(serviceDate: string, cutoffHours: number, timeZone: string): Date {
  return new Date(serviceDayStart(serviceDate, timeZone).getTime() - requireCutoffHours(cutoffHours) * HOUR_MS);
}

/** True while the customer may still change a visit on `serviceDate` themselves. */
export function customerMayChange(now: Date, serviceDate: string, cutoffHours: number, timeZone: string): boolean {
  return now.getTime() < changeDeadline(serviceDate, cutoffHours, timeZone).getTime();
}

/** The first service day the customer could still change at `now`: the earliest day a visit may be moved to. */
export function firstChangeableDate(now: Date, cutoffHours: number, timeZone: string): string {
  let date = zonedCalendarDate(now, timeZone);
  // Whole days of cut-off, plus the day under way and one for a clock change.
  const limit = Math.ceil(requireCutoffHours(cutoffHours) / 24) + 2;
  for (let i = 0; i <= limit && !customerMayChange(now, date, cutoffHours, timeZone); i++) date = addCalendarDays(date, 1);
  return date;
}

/**
 * Days either side of a course's interval a customer may put a later round on. Rounds stay
 * close to the spacing the business set (common practice: rounds 5–7 days apart); a bigger
 * change of the course is the dispatcher's call.
 */
export const ROUND_SPACING_LEEWAY_DAYS = 2;

/** The first and last day (inclusive) a visit may be moved to; null when no day is left. */
export type MoveWindow = { first: string; last: string };

/**
 * The days a customer may move a round of a course to: from the first day still open to
 * changes to the last bookable day and, for a later round, within the leeway of the course's
 * interval after the round before it (never on or before that round's day).
 */
export function customerMoveWindow(input: {
  firstChangeable: string;
  lastBookable: string;
  /** The day of the round before this one (done or still to come); null for a first round. */
  previousRoundDate: string | null;
  intervalDays: number;
}): MoveWindow | null {
  let first = input.firstChangeable;
  let last = input.lastBookable;
  if (input.previousRoundDate) {
    const interval = Math.max(1, input.intervalDays);
    const earliest = addCalendarDays(input.previousRoundDate, Math.max(1, interval - ROUND_SPACING_LEEWAY_DAYS));
    const latest = addCalendarDays(input.previousRoundDate, interval + ROUND_SPACING_LEEWAY_DAYS);
    if (calendarDaysBetween(first, earliest) > 0) first = earliest;
    if (calendarDaysBetween(latest, last) > 0) last = latest;
  }
  return calendarDaysBetween(first, last) >= 0 ? { first, last } : null;
}

/** Whether a day lies in a move window. */
export function isInMoveWindow(window: MoveWindow | null, date: string): boolean {
  return window !== null && calendarDaysBetween(window.first, date) >= 0 && calendarDaysBetween(date, window.last) >= 0;
}

/** How the business can be reached, from settings; empty parts are left out. */
export type BusinessContact = { name: string; phone: string; email: string };

/** "call North Slope Hive Care on 607-555-0100 or e-mail office@example.com", or the name alone. */
export function whomToContact(contact: BusinessContact): string {
  const name = contact.name.trim() || "us";
  const phone = contact.phone.trim();
  const email = contact.email.trim();
  if (phone && email) return `call ${name} on ${phone} or e-mail ${email}`;
  if (phone) return `call ${name} on ${phone}`;
  if (email) return `e-mail ${name} at ${email}`;
  return `contact ${name}`;
}

/** Why a customer cannot change a visit themselves. */
export type CustomerChangeBlock = "cancelled" | "started" | "deferred" | "published" | "cutoff";

/**
 * Whether a customer may change a visit in the portal, and if not, why: only a scheduled
 * visit (a deferred one is waiting for the dispatcher to find it a day), not on a crew's
 * published run, and only before the cut-off. Null when they may.
 */
export function customerChangeBlock(input: {
  status: string;
  onPublishedRun: boolean;
  serviceDate: string;
  now: Date;
  cutoffHours: number;
  timeZone: string;
}): CustomerChangeBlock | null {
  if (input.status === "cancelled") return "cancelled";
  if (input.status === "deferred") return "deferred";
  if (input.status !== "scheduled") return "started";
  if (input.onPublishedRun) return "published";
  if (!customerMayChange(input.now, input.serviceDate, input.cutoffHours, input.timeZone)) return "cutoff";
  return null;
}
