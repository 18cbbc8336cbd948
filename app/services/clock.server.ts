import type { Knex } from "knex";
import { loadBusinessSettings } from "~/models/settings.server";

// "Today" for the business: service days are calendar dates in the business's time
// zone (from settings), not the server's.

/** The calendar date (YYYY-MM-DD) at `instant` in `timeZone`. */
export function dateInZone(instant: Date, timeZone: string): string {
  const parts = new Intl.DateTimeFormat("en-CA", { timeZone, year: "numeric", month: "2-digit", day: "2-digit" }).formatToParts(instant);
  const get = (type: string) => parts.find((p) => p.type === type)?.value ?? "";
  return `${get("year")}-${get("month")}-${get("day")}`;
}

export async function businessToday(db: Knex, now = new Date()): Promise<string> {
  const settings = await loadBusinessSettings(db);
  return dateInZone(now, settings.timeZone);
}
