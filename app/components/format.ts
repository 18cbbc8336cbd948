// Display formatting shared by every screen. Dates are service days (YYYY-MM-DD) and are
// formatted as calendar dates in UTC so server and browser render the same text.

const dayFormat = new Intl.DateTimeFormat("en-US", { weekday: "short", month: "short", day: "numeric", year: "numeric", timeZone: "UTC" });
const shortDayFormat = new Intl.DateTimeFormat("en-US", { weekday: "short", month: "short", day: "numeric", timeZone: "UTC" });

export function formatServiceDate(isoDate: string, withYear = true): string {
  const date = new Date(`${isoDate}T00:00:00Z`);
  return (withYear ? dayFormat : shortDayFormat).format(date);
}

export function formatCents(cents: number, currency = "usd"): string {
  return new Intl.NumberFormat("en-US", { style: "currency", currency: currency.toUpperCase() }).format(cents / 100);
}

/** A clock time of an instant in the business's time zone, e.g. "9:40 AM". */
export function formatClock(instant: Date | string, timeZone: string): string {
  return new Intl.DateTimeFormat("en-US", { hour: "numeric", minute: "2-digit", timeZone }).format(new Date(instant));
}

const BROOD_NAMES: Record<string, string> = { brood: "Brood present", broodless: "Broodless", unknown: "Brood not known" };
export function broodStatusName(status: string): string {
  return BROOD_NAMES[status] ?? status;
}

const VISIT_STATUS_NAMES: Record<string, string> = {
  scheduled: "Scheduled",
  deferred: "Deferred",
  in_progress: "In progress",
  done: "Done",
  cancelled: "Cancelled",
};
export function visitStatusName(status: string): string {
  return VISIT_STATUS_NAMES[status] ?? status;
}

const TIME_PREFERENCE_NAMES: Record<string, string> = { any: "Any time", morning: "Morning", afternoon: "Afternoon" };
export function timePreferenceName(pref: string): string {
  return TIME_PREFERENCE_NAMES[pref] ?? pref;
}

/**
 * A date and time of an instant in the business's time zone, with the zone's abbreviation,
 * e.g. "Nov 20, 2026, 9:40 AM EST".
 */
export function formatInstant(instant: Date | string, timeZone: string): string {
  return new Intl.DateTimeFormat("en-US", {
    month: "short",
    day: "numeric",
    year: "numeric",
    hour: "numeric",
    minute: "2-digit",
    timeZone,
    timeZoneName: "short",
  }).format(new Date(instant));
}
