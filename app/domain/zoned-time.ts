/**
 * Clock times on a service day in the business's time zone, and the instants they name.
 *
 * A service day is a calendar date (YYYY-MM-DD) and the planner counts minutes from its
 * midnight on the local wall clock; the database stores instants (timestamptz). The
 * conversion uses the zone rules that Intl carries (IANA time zone data), so days on which
 * the clocks change come out right:
 *
 * - a wall time that happens twice (the hour repeated when clocks go back) is taken at its
 *   first occurrence, the earlier instant;
 * - a wall time that never happens (the hour skipped when clocks go forward) is moved
 *   forward by the size of the gap, as if the clocks had not changed yet (02:30 on a
 *   spring-forward night in New York becomes 03:30 daylight time).
 *
 * These are the rules of RFC 5545 §3.3.5 for local times and of the "compatible"
 * disambiguation of JavaScript's Temporal proposal.
 */

const formatters = new Map<string, Intl.DateTimeFormat>();

function formatterFor(timeZone: string): Intl.DateTimeFormat {
  let formatter = formatters.get(timeZone);
  if (!formatter) {
    formatter = new Intl.DateTimeFormat("en-US", {
      timeZone,
      hourCycle: "h23",
      year: "numeric",
      month: "2-digit",
      day: "2-digit",
      hour: "2-digit",
      minute: "2-digit",
      second: "2-digit",
    });
    formatters.set(timeZone, formatter);
  }
  return formatter;
}

const MINUTE_MS = 60_000;
const DAY_MS = 24 * 60 * MINUTE_MS;

/** The wall clock of a zone at an instant, as milliseconds of a UTC date with the same fields. */
function wallClockMs(instantMs: number, timeZone: string): number {
  const parts = formatterFor(timeZone).formatToParts(new Date(instantMs));
  const get = (type: Intl.DateTimeFormatPartTypes) => Number(parts.find((p) => p.type === type)?.value ?? NaN);
  const hour = get("hour") % 24;
  return Date.UTC(get("year"), get("month") - 1, get("day"), hour, get("minute"), get("second"));
}

/** Minutes the zone's clock is ahead of UTC at an instant (−240 for New York in summer). */
export function zoneOffsetMinutes(instant: Date | number, timeZone: string): number {
  const ms = typeof instant === "number" ? instant : instant.getTime();
  const whole = Math.floor(ms / 1000) * 1000;
  return Math.round((wallClockMs(whole, timeZone) - whole) / MINUTE_MS);
}

function parseIsoDate(isoDate: string): [number, number, number] {
  const match = /^(\d{4})-(\d{2})-(\d{2})$/.exec(isoDate);
  if (!match) throw new RangeError(`not a YYYY-MM-DD date: ${JSON.stringify(isoDate)}`);
  return [Number(match[1]), Number(match[2]), Number(match[3])];
}

/**
 * The instant at `minutes` after local midnight of `isoDate` on the zone's wall clock
 * (fractions of a minute allowed; values past 1440 run into the next day).
 */
export function zonedDateTimeToInstant(isoDate: string, minutes: number, timeZone: string): Date {
  if (!Number.isFinite(minutes)) throw new RangeError(`minutes must be finite, got ${minutes}`);
  const [year, month, day] = parseIsoDate(isoDate);
  const wallMs = Date.UTC(year, month - 1, day) + Math.round(minutes * MINUTE_MS);
  // The offsets in force a day either side cover any single clock change around this time.
  const before = zoneOffsetMinutes(wallMs - DAY_MS, timeZone);
  const after = zoneOffsetMinutes(wallMs + DAY_MS, timeZone);
  const candidates = [...new Set([before, after])]
    .map((offset) => wallMs - offset * MINUTE_MS)
    .filter((instant) => wallClockMs(Math.floor(instant / 1000) * 1000, timeZone) === Math.floor(wallMs / 1000) * 1000)
    .sort((a, b) => a - b);
  // Twice on the wall clock: the first. Never on it (a skipped hour): the offset from before the change.
  const instant = candidates.length > 0 ? candidates[0] : wallMs - before * MINUTE_MS;
  return new Date(instant);
}

/** Minutes after local midnight of `isoDate` at which `instant` falls on the zone's wall clock. */
export function minutesAfterZonedMidnight(instant: Date, isoDate: string, timeZone: string): number {
  const [year, month, day] = parseIsoDate(isoDate);
  const ms = instant.getTime();
  const whole = Math.floor(ms / 1000) * 1000;
  return (wallClockMs(whole, timeZone) + (ms - whole) - Date.UTC(year, month - 1, day)) / MINUTE_MS;
}

/** The calendar date (YYYY-MM-DD) on the zone's wall clock at an instant. */
export function zonedCalendarDate(instant: Date, timeZone: string): string {
  return new Date(wallClockMs(Math.floor(instant.getTime() / 1000) * 1000, timeZone)).toISOString().slice(0, 10);
}

/** "09:05": the zone's wall-clock time of an instant (24-hour, whole minutes, rounded). */
export function zonedClockTime(instant: Date, timeZone: string): string {
  const rounded = Math.round(instant.getTime() / MINUTE_MS) * MINUTE_MS;
  const wall = new Date(wallClockMs(rounded, timeZone));
  return `${String(wall.getUTCHours()).padStart(2, "0")}:${String(wall.getUTCMinutes()).padStart(2, "0")}`;
}
