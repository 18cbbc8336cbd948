import type { PeriodWeek } from "~/domain/season-figures";

// Number and date wording on the dashboard. Dates are business days (YYYY-MM-DD), formatted
// in UTC so the server and the browser write the same text.

const monthDay = new Intl.DateTimeFormat("en-US", { month: "short", day: "numeric", timeZone: "UTC" });
const monthDayYear = new Intl.DateTimeFormat("en-US", { month: "short", day: "numeric", year: "numeric", timeZone: "UTC" });

function utc(isoDate: string): Date {
  return new Date(`${isoDate}T00:00:00Z`);
}

/** "Oct 12" */
export function shortDay(isoDate: string): string {
  return monthDay.format(utc(isoDate));
}

/** "Oct 12, 2026" */
export function longDay(isoDate: string): string {
  return monthDayYear.format(utc(isoDate));
}

/** "Oct 12–18" or "Sep 28 – Oct 4" (the days of the week inside the period). */
export function dayRange(from: string, to: string): string {
  if (from === to) return shortDay(from);
  if (from.slice(0, 7) === to.slice(0, 7)) return `${shortDay(from)}–${Number(to.slice(8, 10))}`;
  return `${shortDay(from)} – ${shortDay(to)}`;
}

/** "Week 42 (Oct 12–18)", with the ISO year when the period runs over a year's end. */
export function weekName(week: PeriodWeek, withYear: boolean): string {
  return `Week ${week.week}${withYear ? ` of ${week.isoYear}` : ""} (${dayRange(week.from, week.to)}${week.partial ? ", part" : ""})`;
}

/** The x-axis tick of a week: its first day in the period, "Oct 12". */
export function weekTick(week: PeriodWeek): string {
  return shortDay(week.from);
}

const whole = new Intl.NumberFormat("en-US", { maximumFractionDigits: 0 });
const oneDecimal = new Intl.NumberFormat("en-US", { minimumFractionDigits: 1, maximumFractionDigits: 1 });
const upToTwo = new Intl.NumberFormat("en-US", { maximumFractionDigits: 2 });

export function formatCount(n: number): string {
  return whole.format(n);
}

/** Grams as weighed out: up to two decimals, "1,234.5 g". */
export function formatGrams(grams: number): string {
  return `${upToTwo.format(grams)} g`;
}

/** One decimal, or a dash for "nothing to show". */
export function formatOneDecimal(value: number | null): string {
  return value === null ? "—" : oneDecimal.format(value);
}

/** Whole dollars for chart axes: "$1,250". */
export function formatDollarsTick(dollars: number): string {
  return `$${whole.format(dollars)}`;
}

/** Whole minutes: "1,205 min". */
export function formatMinutes(minutes: number): string {
  return `${whole.format(minutes)} min`;
}

/** "84%" fewer, or "12% more" when the load rose; a dash without both figures. */
export function formatReduction(percent: number | null): string {
  if (percent === null) return "—";
  const rounded = Math.round(percent);
  return rounded >= 0 ? `${rounded}% lower` : `${-rounded}% higher`;
}
