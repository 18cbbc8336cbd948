import type { Knex } from "knex";
import { coloniesStillFitting, dayCapacityColonies, type CrewForCapacity } from "~/domain/capacity";
import { addCalendarDays, calendarDaysBetween } from "~/domain/courses";
import { parseClockTime } from "~/domain/units";
import type { BusinessSettings } from "~/domain/settings";

export type DayRoom = { date: string; capacity: number; booked: number; remaining: number; closed: boolean };

/** Visit statuses that take up room on their day. */
export const STATUSES_TAKING_ROOM = ["scheduled", "in_progress", "done"] as const;

export async function activeCrewsForCapacity(db: Knex): Promise<CrewForCapacity[]> {
  const crews = await db("crews").where({ active: true }).select("work_start", "work_end", "vaporizers");
  return crews.map((c) => ({
    workMinutes: parseClockTime(String(c.work_end).slice(0, 5)) - parseClockTime(String(c.work_start).slice(0, 5)),
    vaporizers: c.vaporizers,
  }));
}

/** Room per day from `from` to `to` (inclusive): capacity, colonies booked, colonies still fitting. */
export async function roomBetween(db: Knex, settings: BusinessSettings, from: string, to: string): Promise<DayRoom[]> {
  const [crews, days, booked] = await Promise.all([
    activeCrewsForCapacity(db),
    db("service_days").whereBetween("service_date", [from, to]).select("service_date", "capacity_colonies", "closed"),
    db("visits")
      .whereBetween("service_date", [from, to])
      .whereIn("status", STATUSES_TAKING_ROOM)
      .groupBy("service_date")
      .select("service_date", db.raw("sum(colonies_expected)::int as colonies")),
  ]);
  const dayByDate = new Map(days.map((d) => [d.service_date, d]));
  const bookedByDate = new Map((booked as unknown as { service_date: string; colonies: number }[]).map((b) => [b.service_date, b.colonies]));
  const out: DayRoom[] = [];
  const count = calendarDaysBetween(from, to);
  for (let i = 0; i <= count; i++) {
    const date = addCalendarDays(from, i);
    const day = dayByDate.get(date);
    const capacity = dayCapacityColonies(crews, settings, day ? { capacityOverride: day.capacity_colonies, closed: day.closed } : undefined);
    const taken = bookedByDate.get(date) ?? 0;
    out.push({ date, capacity, booked: taken, remaining: coloniesStillFitting(capacity, taken), closed: Boolean(day?.closed) });
  }
  return out;
}

/** Locks one service day for the rest of the transaction (creating its row if needed) and
 *  returns its room as seen under the lock: concurrent bookings of that day wait here. */
export async function lockDayRoom(trx: Knex.Transaction, settings: BusinessSettings, date: string): Promise<DayRoom> {
  await trx("service_days").insert({ service_date: date }).onConflict("service_date").ignore();
  const day = await trx("service_days").where({ service_date: date }).forUpdate().first();
  const crews = await activeCrewsForCapacity(trx);
  const row = await trx("visits")
    .where({ service_date: date })
    .whereIn("status", STATUSES_TAKING_ROOM)
    .first(trx.raw("coalesce(sum(colonies_expected), 0)::int as colonies"));
  const capacity = dayCapacityColonies(crews, settings, day ? { capacityOverride: day.capacity_colonies, closed: day.closed } : undefined);
  const booked = (row as unknown as { colonies: number }).colonies;
  return { date, capacity, booked, remaining: coloniesStillFitting(capacity, booked), closed: Boolean(day?.closed) };
}

/** Why a day cannot take more colonies: it is closed (or has no capacity at all), or it is full. */
export type DayRefusal = "closed" | "full";

/** A day's room seen under its lock, and whether the colonies asked for fit (refusal null). */
export type DayRoomCheck = DayRoom & { adding: number; refusal: DayRefusal | null };

/** The capacity rule for adding colonies to a day: it must be open and have that much room left. */
function refusalFor(room: DayRoom, adding: number): DayRefusal | null {
  if (room.closed || room.capacity === 0) return "closed";
  return adding > room.remaining ? "full" : null;
}

/**
 * Locks a day (see lockDayRoom) and checks whether `adding` more colonies fit on it. Every
 * write that puts colonies on a day goes through here, so the rule lives in one place and
 * the check sees the day as no concurrent write can change it before commit.
 */
export async function lockDayForColonies(trx: Knex.Transaction, settings: BusinessSettings, date: string, adding: number): Promise<DayRoomCheck> {
  const room = await lockDayRoom(trx, settings, date);
  return { ...room, adding, refusal: refusalFor(room, adding) };
}

/**
 * lockDayForColonies for several days, locked in date order (every writer that holds more
 * than one day takes them in that order, so two of them cannot deadlock). Colonies asked for
 * on the same date are added up. Returns one check per date, in date order.
 */
export async function lockDaysForColonies(
  trx: Knex.Transaction,
  settings: BusinessSettings,
  needs: readonly { date: string; adding: number }[],
): Promise<DayRoomCheck[]> {
  const byDate = new Map<string, number>();
  for (const need of needs) byDate.set(need.date, (byDate.get(need.date) ?? 0) + need.adding);
  const checks: DayRoomCheck[] = [];
  // ISO dates sort as strings.
  for (const date of [...byDate.keys()].sort()) checks.push(await lockDayForColonies(trx, settings, date, byDate.get(date)!));
  return checks;
}
