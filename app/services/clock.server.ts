// "Today" for the business: service days are calendar dates in the business's time
// zone, not the server's. VARROUTE_TIME_ZONE overrides the default until settings do.
const DEFAULT_TIME_ZONE = "America/New_York";

export function businessTimeZone(): string {
  return process.env.VARROUTE_TIME_ZONE || DEFAULT_TIME_ZONE;
}

/** The calendar date (YYYY-MM-DD) at `instant` in `timeZone`. */
export function dateInZone(instant: Date, timeZone: string): string {
  const parts = new Intl.DateTimeFormat("en-CA", { timeZone, year: "numeric", month: "2-digit", day: "2-digit" }).formatToParts(instant);
  const get = (type: string) => parts.find((p) => p.type === type)?.value ?? "";
  return `${get("year")}-${get("month")}-${get("day")}`;
}

export function businessToday(now = new Date()): string {
  return dateInZone(now, businessTimeZone());
}
