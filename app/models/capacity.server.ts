import type { Knex } from "knex";
import {
  coloniesStillFitting,
  crewWorksOn,
  dayCapacityColonies,
  dayCapacityGrams,
  gramsFit,
  gramsStillFitting,
  type CrewForCapacity,
} from "~/domain/capacity";
import { centigramsToGrams, gramsToCentigrams } from "~/domain/dose";
import { addCalendarDays, calendarDaysBetween } from "~/domain/courses";
import { parseClockTime } from "~/domain/units";
import type { BusinessSettings } from "~/domain/settings";
import { plannedYardDoses, typicalColonyLoads } from "./yard-doses.server";

export type DayRoom = {
  date: string;
  capacity: number;
  booked: number;
  remaining: number;
  /** Grams the working crews can apply together; null when grams do not bind the day (a crew without a gram limit, or no crew). */
  gramsCapacity: number | null;
  /** Grams the day's visits take: colonies × their yard's planned dose per colony (from its colonies as the crew found them). */
  gramsBooked: number;
  /** Grams that still fit (never below 0); null when grams do not bind the day. */
  gramsRemaining: number | null;
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

/** The settings with what the day estimate also needs from the books: a typical colony's vaporizer loads. */
export type CapacityBusinessSettings = BusinessSettings & { loadsPerTypicalColony: number };

/**
 * The business's settings with a typical colony's vaporizer loads, as the day estimate takes
 * them; settings that already carry them are returned as they are (read once per write).
 */
export async function withTypicalLoads(db: Knex, settings: BusinessSettings | CapacityBusinessSettings): Promise<CapacityBusinessSettings> {
  if ("loadsPerTypicalColony" in settings && settings.loadsPerTypicalColony != null) return settings;
  return { ...settings, loadsPerTypicalColony: await typicalColonyLoads(db, settings) };
}

function dayRoom(
  date: string,
  crews: readonly CrewForCapacity[],
  settings: CapacityBusinessSettings,
  day: { capacity_colonies: number | null; closed: boolean } | undefined,
  booked: { colonies: number; grams: number },
): DayRoom {
  const capacity = dayCapacityColonies(crews, settings, day ? { capacityOverride: day.capacity_colonies, closed: day.closed } : undefined);
  const closed = Boolean(day?.closed) || (crews.length === 0 && day?.capacity_colonies == null);
  const gramsCapacity = dayCapacityGrams(crews, day);
  return {
    date,
    capacity,
    booked: booked.colonies,
    remaining: coloniesStillFitting(capacity, booked.colonies),
    gramsCapacity,
    gramsBooked: booked.grams,
    gramsRemaining: gramsStillFitting(gramsCapacity, booked.grams),
    closed,
    crewsWorking: day?.closed ? 0 : crews.length,
  };
}

type BookedYard = { serviceDate: string; yardId: number; colonies: number };

/** Colonies booked from `from` to `to`, per day and yard: visits taking room. */
async function bookedYards(db: Knex, from: string, to: string): Promise<BookedYard[]> {
  const rows = (await db("visits")
    .whereBetween("service_date", [from, to])
    .whereIn("status", STATUSES_TAKING_ROOM)
    .groupBy("service_date", "yard_id")
    .select("service_date", "yard_id", db.raw("sum(colonies_expected)::int as colonies"))) as unknown as { service_date: string; yard_id: number; colonies: number }[];
  return rows.map((r) => ({ serviceDate: r.service_date, yardId: Number(r.yard_id), colonies: Number(r.colonies) }));
}

/**
 * Colonies and grams booked per day: each yard's colonies × its planned dose per colony —
 * its colonies as the crew last found them (yard-doses.server.ts), which the crew doses.
 */
async function bookedByDay(db: Knex, settings: BusinessSettings, from: string, to: string): Promise<Map<string, { colonies: number; grams: number }>> {
  // One query after the other: `db` may be a transaction.
  const booked = await bookedYards(db, from, to);
  const doses = await plannedYardDoses(db, settings, booked.map((b) => b.yardId));
  const sums = new Map<string, { colonies: number; centigrams: number }>();
  for (const b of booked) {
    const sum = sums.get(b.serviceDate) ?? { colonies: 0, centigrams: 0 };
    const perColony = gramsToCentigrams(doses.get(b.yardId)?.dosePerColonyGrams ?? 0);
    sums.set(b.serviceDate, { colonies: sum.colonies + b.colonies, centigrams: sum.centigrams + b.colonies * perColony });
  }
  return new Map([...sums].map(([date, sum]) => [date, { colonies: sum.colonies, grams: centigramsToGrams(sum.centigrams) }]));
}

/** Room per day from `from` to `to` (inclusive): capacity, colonies booked, colonies still fitting, and the same in grams. */
export async function roomBetween(db: Knex, settings: BusinessSettings, from: string, to: string): Promise<DayRoom[]> {
  // One query after the other: `db` may be a transaction (working-days.server.ts).
  const crews = await activeCrews(db);
  const closures = await closedCrewDays(db, from, to);
  const days = await db("service_days").whereBetween("service_date", [from, to]).select("service_date", "capacity_colonies", "closed");
  const booked = await bookedByDay(db, settings, from, to);
  const estimateSettings = await withTypicalLoads(db, settings);
  const dayByDate = new Map(days.map((d) => [d.service_date, d]));
  const out: DayRoom[] = [];
  const count = calendarDaysBetween(from, to);
  for (let i = 0; i <= count; i++) {
    const date = addCalendarDays(from, i);
    const day = dayByDate.get(date);
    out.push(dayRoom(date, working(crews, date, false, closures.get(date)), estimateSettings, day, booked.get(date) ?? { colonies: 0, grams: 0 }));
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
  const booked = await bookedByDay(trx, settings, date, date);
  return dayRoom(date, crews, await withTypicalLoads(trx, settings), day, booked.get(date) ?? { colonies: 0, grams: 0 });
}

/** Why a day cannot take more colonies: it is closed (or has no capacity at all), or it is full (in colonies or in grams). */
export type DayRefusal = "closed" | "full";

/**
 * A day's room seen under its lock, and whether the colonies and grams asked for fit
 * (refusal null). `gramsShort`: the grams are what does not fit (the colonies may not either).
 */
export type DayRoomCheck = DayRoom & { adding: number; addingGrams: number; refusal: DayRefusal | null; gramsShort: boolean };

/** The capacity rule for adding to a day: it must be open and have that many colonies and grams left. */
function refusalFor(room: DayRoom, adding: number, addingGrams: number): { refusal: DayRefusal | null; gramsShort: boolean } {
  if (room.closed || room.capacity === 0) return { refusal: "closed", gramsShort: false };
  const gramsShort = addingGrams > 0 && !gramsFit(addingGrams, room.gramsRemaining);
  return { refusal: adding > room.remaining || gramsShort ? "full" : null, gramsShort };
}

/**
 * Locks a day (see lockDayRoom) and checks whether `adding` more colonies taking
 * `addingGrams` more grams (their yards' doses; 0 when not given) fit on it. Every write that
 * puts colonies on a day goes through here, so the rule lives in one place and the check
 * sees the day as no concurrent write can change it before commit.
 */
export async function lockDayForColonies(
  trx: Knex.Transaction,
  settings: BusinessSettings,
  date: string,
  adding: number,
  addingGrams = 0,
): Promise<DayRoomCheck> {
  const room = await lockDayRoom(trx, settings, date);
  return { ...room, adding, addingGrams, ...refusalFor(room, adding, addingGrams) };
}

/**
 * lockDayForColonies for several days, locked in date order (every writer that holds more
 * than one day takes them in that order, so two of them cannot deadlock). Colonies and grams
 * asked for on the same date are added up. Returns one check per date, in date order.
 */
export async function lockDaysForColonies(
  trx: Knex.Transaction,
  settings: BusinessSettings,
  needs: readonly { date: string; adding: number; addingGrams?: number }[],
): Promise<DayRoomCheck[]> {
  const byDate = new Map<string, { adding: number; centigrams: number }>();
  for (const need of needs) {
    const sum = byDate.get(need.date) ?? { adding: 0, centigrams: 0 };
    byDate.set(need.date, { adding: sum.adding + need.adding, centigrams: sum.centigrams + gramsToCentigrams(need.addingGrams ?? 0) });
  }
  const checks: DayRoomCheck[] = [];
  // A typical colony's loads read once for all the days.
  const estimateSettings = await withTypicalLoads(trx, settings);
  // ISO dates sort as strings.
  for (const date of [...byDate.keys()].sort()) {
    const need = byDate.get(date)!;
    checks.push(await lockDayForColonies(trx, estimateSettings, date, need.adding, centigramsToGrams(need.centigrams)));
  }
  return checks;
}

/**
 * The dose per colony each yard is planned with, by yard id: the average of its active
 * colonies' doses as the crew last found them, rounded up to 0.01 g; the yard's own figures
 * (box type's rate × brood boxes per colony) when it has no active colony.
 */
export async function yardDosesPerColony(db: Knex, settings: BusinessSettings, yardIds: readonly number[]): Promise<Map<number, number>> {
  const doses = await plannedYardDoses(db, settings, yardIds);
  return new Map([...doses].map(([id, dose]) => [id, dose.dosePerColonyGrams]));
}

/** The dose per colony of each visit's yard (see yardDosesPerColony), by visit id. */
export async function visitDosesPerColony(db: Knex, settings: BusinessSettings, visitIds: readonly number[]): Promise<Map<number, number>> {
  if (visitIds.length === 0) return new Map();
  const rows = await db("visits").whereIn("id", [...new Set(visitIds)]).select("id", "yard_id");
  const doses = await yardDosesPerColony(db, settings, rows.map((r) => Number(r.yard_id)));
  return new Map(rows.map((r) => [Number(r.id), doses.get(Number(r.yard_id)) ?? 0]));
}
