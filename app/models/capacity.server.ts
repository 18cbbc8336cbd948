import type { Knex } from "knex";
import { coloniesStillFitting, crewWorksOn, dayCapacityColonies, type CrewForCapacity } from "~/domain/capacity";
import { addCalendarDays, calendarDaysBetween } from "~/domain/courses";
import { parseClockTime } from "~/domain/units";
import type { BusinessSettings } from "~/domain/settings";

export type DayRoom = {
  date: string;
  capacity: number;
  booked: number;
  remaining: number;
  /** Closed by the dispatcher, or no crew works that day (and no capacity was set for it). */
  closed: boolean;
  /** Crews working that day (active, on one of their weekdays, their own day not closed). */
  crewsWorking: number;
};

/** Visit statuses that take up room on their day. */
export const STATUSES_TAKING_ROOM = ["scheduled", "in_progress", "done"] as const;

type CapacityCrew = CrewForCapacity & { id: number; active: boolean; workingWeekdays: number[] };

/** Every active crew with what its capacity and working days depend on. */
async function activeCrews(db: Knex): Promise<CapacityCrew[]> {
  const crews = await db("crews")
    .where({ active: true })
    .orderBy("id")
    .select("id", "work_start", "work_end", "vaporizers", "working_weekdays", "max_colonies_per_day", "max_dose_grams_per_day");
  return crews.map((c) => ({
    id: Number(c.id),
    active: true,
    workingWeekdays: (c.working_weekdays ?? []).map(Number),
    workMinutes: parseClockTime(String(c.work_end).slice(0, 5)) - parseClockTime(String(c.work_start).slice(0, 5)),
    vaporizers: c.vaporizers,
    maxColoniesPerDay: c.max_colonies_per_day,
    maxDoseGramsPerDay: c.max_dose_grams_per_day == null ? null : Number(c.max_dose_grams_per_day),
  }));
}

/** Crews whose own day is closed, by date, from `from` to `to` (inclusive). */
async function closedCrewDays(db: Knex, from: string, to: string): Promise<Map<string, Set<number>>> {
  const rows = await db("crew_days").whereBetween("service_date", [from, to]).where({ closed: true }).select("crew_id", "service_date");
  const out = new Map<string, Set<number>>();
  for (const row of rows) {
    const set = out.get(row.service_date) ?? new Set<number>();
    set.add(Number(row.crew_id));
    out.set(row.service_date, set);
  }
  return out;
}

function working(crews: readonly CapacityCrew[], date: string, dayClosed: boolean, closedCrews: ReadonlySet<number> | undefined): CapacityCrew[] {
  return crews.filter((crew) => crewWorksOn(crew, date, { dayClosed, crewDayClosed: closedCrews?.has(crew.id) ?? false }));
}

/**
 * Ids of the crews working on a date: active, on one of their weekdays, their own day not
 * closed, the whole day not closed. The booking capacity and the day planner use the same.
 */
export async function crewIdsWorkingOn(db: Knex, date: string): Promise<number[]> {
  // One query after the other: `db` may be a transaction, whose one connection takes one at a time.
  const crews = await activeCrews(db);
  const closures = await closedCrewDays(db, date, date);
  const day = await db("service_days").where({ service_date: date }).first("closed");
  return working(crews, date, Boolean(day?.closed), closures.get(date)).map((c) => c.id);
}

/** The crews working on a date, as the capacity estimate takes them. */
export async function activeCrewsForCapacity(db: Knex, date: string): Promise<CrewForCapacity[]> {
  const crews = await activeCrews(db);
  const closures = await closedCrewDays(db, date, date);
  return working(crews, date, false, closures.get(date));
}

function dayRoom(
  date: string,
  crews: readonly CrewForCapacity[],
  settings: BusinessSettings,
  day: { capacity_colonies: number | null; closed: boolean } | undefined,
  booked: number,
): DayRoom {
  const capacity = dayCapacityColonies(crews, settings, day ? { capacityOverride: day.capacity_colonies, closed: day.closed } : undefined);
  const closed = Boolean(day?.closed) || (crews.length === 0 && day?.capacity_colonies == null);
  return { date, capacity, booked, remaining: coloniesStillFitting(capacity, booked), closed, crewsWorking: day?.closed ? 0 : crews.length };
}

/** Room per day from `from` to `to` (inclusive): capacity, colonies booked, colonies still fitting. */
export async function roomBetween(db: Knex, settings: BusinessSettings, from: string, to: string): Promise<DayRoom[]> {
  // One query after the other: `db` may be a transaction (working-days.server.ts).
  const crews = await activeCrews(db);
  const closures = await closedCrewDays(db, from, to);
  const days = await db("service_days").whereBetween("service_date", [from, to]).select("service_date", "capacity_colonies", "closed");
  const booked = await db("visits")
    .whereBetween("service_date", [from, to])
    .whereIn("status", STATUSES_TAKING_ROOM)
    .groupBy("service_date")
    .select("service_date", db.raw("sum(colonies_expected)::int as colonies"));
  const dayByDate = new Map(days.map((d) => [d.service_date, d]));
  const bookedByDate = new Map((booked as unknown as { service_date: string; colonies: number }[]).map((b) => [b.service_date, b.colonies]));
  const out: DayRoom[] = [];
  const count = calendarDaysBetween(from, to);
  for (let i = 0; i <= count; i++) {
    const date = addCalendarDays(from, i);
    const day = dayByDate.get(date);
    out.push(dayRoom(date, working(crews, date, false, closures.get(date)), settings, day, bookedByDate.get(date) ?? 0));
  }
  return out;
}

/** Locks one service day for the rest of the transaction (creating its row if needed) and
 *  returns its room as seen under the lock: concurrent bookings of that day wait here. */
export async function lockDayRoom(trx: Knex.Transaction, settings: BusinessSettings, date: string): Promise<DayRoom> {
  await trx("service_days").insert({ service_date: date }).onConflict("service_date").ignore();
  const day = await trx("service_days").where({ service_date: date }).forUpdate().first();
  // Read after the lock: a crew-day closure takes this same lock, so what is read here holds.
  const crews = await activeCrewsForCapacity(trx, date);
  const row = await trx("visits")
    .where({ service_date: date })
    .whereIn("status", STATUSES_TAKING_ROOM)
    .first(trx.raw("coalesce(sum(colonies_expected), 0)::int as colonies"));
  return dayRoom(date, crews, settings, day, (row as unknown as { colonies: number }).colonies);
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
