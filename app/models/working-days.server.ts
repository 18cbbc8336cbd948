import type { Knex } from "knex";
import { formatServiceDate } from "~/components/format";
import { crewWorksOn, dayCapacityColonies, isoWeekdayOf, visitsBeyondCapacity, WEEKDAYS, type CrewForCapacity } from "~/domain/capacity";
import { addCalendarDays, calendarDaysBetween, rescheduleFollowingRounds, type CourseRound } from "~/domain/courses";
import type { BusinessSettings } from "~/domain/settings";
import { parseClockTime } from "~/domain/units";
import { visitRescheduledEmail } from "~/emails/booking";
import type { WorkingDayChange } from "~/forms/working-day";
import { dateInZone } from "~/services/clock.server";
import { serverEnv } from "~/services/env.server";
import { requestEmailDelivery } from "~/services/jobs.server";
import { centigramsToGrams, gramsToCentigrams } from "~/domain/dose";
import { lockDayRoom, lockDaysForColonies, roomBetween, withTypicalLoads, yardDosesPerColony, type DayRoom } from "./capacity.server";
import { lockServiceDay } from "./day-plan.server";
import { queueEmail } from "./emails.server";
import { loadBusinessSettings } from "./settings.server";

// Working days: the dispatcher closes a whole day or one crew's day (holiday, weather, a
// truck in the shop), sets a day's capacity, or reopens. When the day then has less room
// than is booked, the visits that no longer fit move to the next days with room, each
// customer is e-mailed, and every closure and every move is audited — all in one
// transaction, or nothing.
//
// Which visits move: on a closed day, every open visit (scheduled or deferred). Otherwise the
// visits taking room stay in booking order (first booked, first kept) as long as they fit,
// in colonies and in grams (a closed crew's gram limit leaves the day; capacity.ts); visits
// under way or done, and visits on published runs, always stay.
//
// Published runs (decided): the crew has been sent its run, so this never takes a stop off a
// published run behind the crew's back. A change that would have to move a visit on a
// published run (closing the day, or cutting the room below what the published runs hold),
// or that closes the day of a crew whose run is published, is refused with a message naming
// the runs and visits: re-plan the day with published runs included (they become drafts) or
// move those visits yourself first. Stops on draft runs are simply taken off (the run's
// version goes up, to be planned again); a closed crew's draft run for the day is removed.
// A run under way or done blocks closing its day or its crew's day.
//
// Where visits go: the first day after the changed day (never before tomorrow), within 60
// days, with room for the visit's colonies and grams, no closer to its course's previous round than
// the course's spacing. Later rounds of the course already booked move by as many days, as
// the course rules do when a round is carried out later (courses.ts rescheduleFollowingRounds),
// and need room on their new days too. The customer gets one e-mail per moved visit, naming
// the later rounds' new days; every moved round gets its audit entry.
//
// Locks, in order: the day's planning lock (as planning and publishing take it), the day's
// open visits (a booking takes its yards before its day, a reschedule its visit before its
// day: the same order), the day's row, its visits again (bookings that got in meanwhile). The
// target days are chosen from a read of their room, then locked in date order — all after the
// changed day, as every writer holding several days does (capacity.server.ts
// lockDaysForColonies) — and checked again under their locks; if a booking took the room in
// between, or a deadlock with some other path happens, the whole change is tried again.

/** Days searched for room after the changed day. */
export const MOVE_SEARCH_DAYS = 60;

/** A change that cannot be made, with the form field it concerns. */
export class WorkingDayRefused extends Error {
  constructor(
    message: string,
    readonly field: "date" | "crewId" | "capacity" | "note" | "form",
  ) {
    super(message);
    this.name = "WorkingDayRefused";
  }
}

export type MovedVisit = {
  visitId: number;
  yardName: string;
  customerName: string;
  colonies: number;
  fromDate: string;
  toDate: string;
};

export type WorkingDayResult = {
  date: string;
  intent: WorkingDayChange["intent"];
  moved: MovedVisit[];
  /** Draft runs taken apart by the change (their stops removed). */
  draftRunsChanged: number;
  room: DayRoom;
};

const OPEN = ["scheduled", "deferred"] as const;
const UNDER_WAY = ["in_progress", "done"] as const;

type DayVisitRow = {
  id: number;
  status: "scheduled" | "deferred" | "in_progress" | "done";
  colonies_expected: number;
  round_number: number;
  course_id: number;
  yard_id: number;
  yard_name: string;
  customer_id: number;
  customer_name: string;
  customer_email: string;
  anonymised_at: Date | null;
  booked_at: Date;
  run_id: number | null;
  run_status: "draft" | "published" | "in_progress" | "done" | null;
  run_crew_id: number | null;
  crew_name: string | null;
};

function colonies(n: number): string {
  return `${n} ${n === 1 ? "colony" : "colonies"}`;
}

/** Centigrams some colonies of a yard take, at the yard's dose per colony (capacity.ts counts the same way). */
function centigramsFor(coloniesCount: number, dosePerColony: number | undefined): number {
  return coloniesCount * gramsToCentigrams(dosePerColony ?? 0);
}

function isRetryable(error: unknown): boolean {
  const code = (error as { code?: unknown } | null)?.code;
  return code === "40P01" || code === "40001";
}

async function dayVisits(trx: Knex.Transaction, date: string): Promise<DayVisitRow[]> {
  return (await trx("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .leftJoin("courses", "courses.id", "visits.course_id")
    .leftJoin("bookings", "bookings.id", "courses.booking_id")
    .leftJoin("stops", "stops.visit_id", "visits.id")
    .leftJoin("runs", "runs.id", "stops.run_id")
    .leftJoin("crews", "crews.id", "runs.crew_id")
    .where("visits.service_date", date)
    .whereIn("visits.status", [...OPEN, ...UNDER_WAY])
    .orderBy("visits.id")
    .forUpdate("visits")
    .select(
      "visits.id",
      "visits.status",
      "visits.colonies_expected",
      "visits.round_number",
      "visits.course_id",
      "visits.yard_id",
      "yards.name as yard_name",
      "customers.id as customer_id",
      "customers.name as customer_name",
      "customers.email as customer_email",
      "customers.anonymised_at",
      trx.raw("coalesce(bookings.created_at, courses.created_at, visits.created_at) as booked_at"),
      "runs.id as run_id",
      "runs.status as run_status",
      "runs.crew_id as run_crew_id",
      "crews.name as crew_name",
    )) as unknown as DayVisitRow[];
}

/** "Hilltop of Ann Smith (Crew 1)" — a visit as the dispatcher reads it. */
function visitName(v: DayVisitRow): string {
  return `${v.yard_name} of ${v.customer_name}${v.crew_name ? ` (${v.crew_name})` : ""}`;
}

function byBooking(a: DayVisitRow, b: DayVisitRow): number {
  return new Date(a.booked_at).getTime() - new Date(b.booked_at).getTime() || a.id - b.id;
}

/** A later open round of a moved visit's course: it shifts by as many days (courses.ts). */
type LaterRound = { id: number; roundNumber: number; date: string; colonies: number; runId: number | null; runStatus: string | null; crewName: string | null };

/** What moving one visit involves: the first day its course allows, and its later rounds that follow it. */
type MoveNeed = { visit: DayVisitRow; from: string; rounds: CourseRound[]; later: LaterRound[] };

async function moveNeed(trx: Knex.Transaction, visit: DayVisitRow, start: string): Promise<MoveNeed> {
  const course = await trx("courses").where({ id: visit.course_id }).first("interval_days");
  const spacing = Math.max(0, Number(course?.interval_days ?? 0));
  const rows = (await trx("visits")
    .leftJoin("stops", "stops.visit_id", "visits.id")
    .leftJoin("runs", "runs.id", "stops.run_id")
    .leftJoin("crews", "crews.id", "runs.crew_id")
    .where("visits.course_id", visit.course_id)
    .orderBy("visits.round_number")
    .select(
      "visits.id",
      "visits.round_number",
      "visits.service_date",
      "visits.status",
      "visits.colonies_expected",
      "runs.id as run_id",
      "runs.status as run_status",
      "crews.name as crew_name",
    )) as { id: number; round_number: number; service_date: string; status: CourseRound["status"]; colonies_expected: number; run_id: number | null; run_status: string | null; crew_name: string | null }[];
  const rounds: CourseRound[] = rows.map((r) => ({ roundNumber: r.round_number, date: r.service_date, status: r.status }));
  // Never closer to the round before than the course's spacing.
  let from = start;
  const previous = [...rows].reverse().find((r) => r.round_number < visit.round_number && r.status !== "cancelled");
  if (previous && spacing > 0) {
    const after = addCalendarDays(previous.service_date, spacing);
    if (calendarDaysBetween(from, after) > 0) from = after;
  }
  const later = rows
    .filter((r) => r.round_number > visit.round_number && (OPEN as readonly string[]).includes(r.status))
    .map((r) => ({ id: Number(r.id), roundNumber: r.round_number, date: r.service_date, colonies: r.colonies_expected, runId: r.run_id === null ? null : Number(r.run_id), runStatus: r.run_status, crewName: r.crew_name }));
  return { visit, from, rounds, later };
}

/** Takes a visit off its draft run (if on one); the run's version goes up, to be planned again. */
async function takeOffDraftRun(trx: Knex.Transaction, visitId: number, runId: number | null): Promise<boolean> {
  if (runId === null) return false;
  await trx("stops").where({ visit_id: visitId }).delete();
  await trx("runs").where({ id: runId }).increment("version", 1).update({ updated_at: trx.fn.now() as unknown as Date });
  return true;
}

type Placement = { need: MoveNeed; toDate: string; later: { round: LaterRound; toDate: string }[] };

/** Room taken by a concurrent booking between the plan and the locks: the transaction is tried again. */
class RoomTakenMeanwhile extends Error {
  readonly code = "40001"; // retried like a serialization failure
  constructor() {
    super("a day's room was taken while the visits were being placed");
  }
}

/**
 * The first day with room for each visit (booking order first) and for its later rounds
 * shifted by as many days, then every target day locked in date order and checked again
 * under its lock. Throws WorkingDayRefused naming the visits no day has room for, or
 * RoomTakenMeanwhile when a booking took the room in between (the caller tries again).
 */
async function placeVisits(trx: Knex.Transaction, settings: BusinessSettings, needs: MoveNeed[], start: string): Promise<Placement[]> {
  const last = addCalendarDays(start, MOVE_SEARCH_DAYS - 1);
  const latestLater = needs.flatMap((n) => n.later.map((r) => r.date)).sort().at(-1);
  const readTo = latestLater && calendarDaysBetween(last, addCalendarDays(latestLater, MOVE_SEARCH_DAYS)) > 0 ? addCalendarDays(latestLater, MOVE_SEARCH_DAYS) : last;
  const rooms = new Map((await roomBetween(trx, settings, start, readTo)).map((r) => [r.date, r]));
  const doses = await yardDosesPerColony(trx, settings, needs.map((n) => n.visit.yard_id));
  const cg = (need: MoveNeed, count: number) => centigramsFor(count, doses.get(need.visit.yard_id));
  // Colonies, and centigrams, this change adds to (or frees on) each day.
  const delta = new Map<string, number>();
  const deltaCg = new Map<string, number>();
  const free = (date: string) => {
    const room = rooms.get(date);
    if (!room || room.closed || room.capacity === 0) return -Infinity;
    return room.capacity - room.booked - (delta.get(date) ?? 0);
  };
  // Centigrams still free on a day (Infinity when grams do not bind it): not clamped at 0, so
  // a day over its grams already takes nothing more, whatever leaves it.
  const freeCg = (date: string) => {
    const room = rooms.get(date);
    if (!room || room.gramsCapacity == null) return Infinity;
    return gramsToCentigrams(room.gramsCapacity) - gramsToCentigrams(room.gramsBooked) - (deltaCg.get(date) ?? 0);
  };
  // A yard is not booked twice on one day (its own rounds' old days excepted, they move too).
  const yardDays = new Map<string, number>();
  for (const r of await trx("visits")
    .whereIn("yard_id", [...new Set(needs.map((n) => n.visit.yard_id))])
    .whereIn("status", [...OPEN, "in_progress"])
    .whereBetween("service_date", [start, readTo])
    .select("yard_id", "service_date")) {
    const key = `${r.yard_id}:${r.service_date}`;
    yardDays.set(key, (yardDays.get(key) ?? 0) + 1);
  }

  const placed: Placement[] = [];
  const unplaced: MoveNeed[] = [];
  // Visits some day had room for in colonies but not in grams: the message says so.
  const gramsShort = new Set<MoveNeed>();
  for (const need of needs) {
    const { visit } = need;
    const own = new Set(need.later.map((r) => r.date));
    const yardFree = (date: string) => (yardDays.get(`${visit.yard_id}:${date}`) ?? 0) - (own.has(date) ? 1 : 0) <= 0;
    const visitCg = cg(need, visit.colonies_expected);
    let found: Placement | null = null;
    for (let date = need.from; calendarDaysBetween(date, last) >= 0 && !found; date = addCalendarDays(date, 1)) {
      if (!yardFree(date) || free(date) < visit.colonies_expected) continue;
      if (freeCg(date) < visitCg) {
        gramsShort.add(need);
        continue;
      }
      let shifted: CourseRound[];
      try {
        shifted = rescheduleFollowingRounds(need.rounds, visit.round_number, date);
      } catch {
        continue; // a later round already started: this course cannot shift
      }
      const later = need.later.map((round) => ({ round, toDate: shifted.find((r) => r.roundNumber === round.roundNumber)!.date }));
      // Later rounds' new days: room for each, in colonies and grams (what they free on their old days counts).
      const trial = new Map<string, number>();
      const trialCg = new Map<string, number>();
      for (const l of later) {
        trial.set(l.toDate, (trial.get(l.toDate) ?? 0) + l.round.colonies);
        trial.set(l.round.date, (trial.get(l.round.date) ?? 0) - l.round.colonies);
        trialCg.set(l.toDate, (trialCg.get(l.toDate) ?? 0) + cg(need, l.round.colonies));
        trialCg.set(l.round.date, (trialCg.get(l.round.date) ?? 0) - cg(need, l.round.colonies));
      }
      const coloniesFit = later.every((l) => rooms.has(l.toDate) && yardFree(l.toDate) && free(l.toDate) - (trial.get(l.toDate) ?? 0) >= 0);
      const gramsFitToo = later.every((l) => freeCg(l.toDate) - (trialCg.get(l.toDate) ?? 0) >= 0);
      if (coloniesFit && !gramsFitToo) gramsShort.add(need);
      if (coloniesFit && gramsFitToo) found = { need, toDate: date, later };
    }
    if (!found) {
      unplaced.push(need);
      continue;
    }
    placed.push(found);
    delta.set(found.toDate, (delta.get(found.toDate) ?? 0) + visit.colonies_expected);
    deltaCg.set(found.toDate, (deltaCg.get(found.toDate) ?? 0) + visitCg);
    yardDays.set(`${visit.yard_id}:${found.toDate}`, (yardDays.get(`${visit.yard_id}:${found.toDate}`) ?? 0) + 1);
    for (const l of found.later) {
      delta.set(l.toDate, (delta.get(l.toDate) ?? 0) + l.round.colonies);
      delta.set(l.round.date, (delta.get(l.round.date) ?? 0) - l.round.colonies);
      deltaCg.set(l.toDate, (deltaCg.get(l.toDate) ?? 0) + cg(need, l.round.colonies));
      deltaCg.set(l.round.date, (deltaCg.get(l.round.date) ?? 0) - cg(need, l.round.colonies));
      yardDays.set(`${visit.yard_id}:${l.toDate}`, (yardDays.get(`${visit.yard_id}:${l.toDate}`) ?? 0) + 1);
      yardDays.set(`${visit.yard_id}:${l.round.date}`, (yardDays.get(`${visit.yard_id}:${l.round.date}`) ?? 0) - 1);
    }
  }
  if (unplaced.length > 0) {
    // Grams are named where they were what some day lacked: a visit's colonies alone would not say why.
    const size = (n: MoveNeed) =>
      gramsShort.has(n) ? `${colonies(n.visit.colonies_expected)}, ${centigramsToGrams(cg(n, n.visit.colonies_expected))} g` : colonies(n.visit.colonies_expected);
    const names = unplaced
      .map((n) => `${n.visit.yard_name} of ${n.visit.customer_name} (${size(n)}${n.later.length ? `, with ${n.later.length === 1 ? "its next round" : `its ${n.later.length} later rounds`}` : ""})`)
      .join(", ");
    const gramsWhy = unplaced.some((n) => gramsShort.has(n));
    throw new WorkingDayRefused(
      `Nothing was changed: no day from ${formatServiceDate(start)} to ${formatServiceDate(last)} has room for ${names}${unplaced.some((n) => n.from !== start || n.later.length > 0) ? ", keeping its course's spacing between rounds" : ""}${
        gramsWhy ? " (the crews' daily gram limits leave too few grams on the days that have the colonies)" : ""
      }. Raise a day's capacity${gramsWhy ? " or a crew's daily gram limit," : ""} or move ${unplaced.length === 1 ? "that visit" : "those visits"} yourself first.`,
      "form",
    );
  }

  // Every day that takes colonies or grams, locked in date order (all after the changed day)
  // and checked again, grams included, by the rule every booking goes through.
  const adding = [...new Set([...delta.keys(), ...deltaCg.keys()])]
    .map((date) => ({ date, adding: delta.get(date) ?? 0, addingGrams: centigramsToGrams(deltaCg.get(date) ?? 0) }))
    .filter((n) => n.adding > 0 || n.addingGrams > 0);
  for (const check of await lockDaysForColonies(trx, settings, adding)) {
    if (check.refusal !== null) throw new RoomTakenMeanwhile();
  }
  return placed;
}

/** Moves a visit in the transaction the way a dispatcher's reschedule does (booking and audit entry included). */
async function moveVisitRow(trx: Knex.Transaction, visit: { id: number; round_number: number; course_id: number }, fromDate: string, toDate: string, reason: string, actor: number) {
  await trx("visits").where({ id: visit.id }).update({ service_date: toDate, status: "scheduled", defer_reason: null, updated_at: trx.fn.now() as unknown as Date });
  if (visit.round_number === 1) {
    await trx("bookings")
      .whereIn("id", trx("courses").where({ id: visit.course_id }).select("booking_id"))
      .update({ service_date: toDate, updated_at: trx.fn.now() as unknown as Date });
  }
  await trx("audit_log").insert({
    actor_user_id: actor,
    action: "visit.reschedule",
    entity_type: "visit",
    entity_id: String(visit.id),
    before: JSON.stringify({ serviceDate: fromDate }),
    after: JSON.stringify({ serviceDate: toDate, reason }),
  });
}

/** Moves a visit (and its later rounds) and queues one e-mail to the customer about it. */
async function applyPlacement(trx: Knex.Transaction, placement: Placement, fromDate: string, reason: string, actor: number): Promise<number | null> {
  const { visit } = placement.need;
  await moveVisitRow(trx, visit, fromDate, placement.toDate, reason, actor);
  for (const l of placement.later) {
    await moveVisitRow(trx, { id: l.round.id, round_number: l.round.roundNumber, course_id: visit.course_id }, l.round.date, l.toDate, `Round ${visit.round_number} moved to ${placement.toDate}; the rounds after it keep their spacing.`, actor);
  }
  if (visit.anonymised_at) return null; // no address to write to
  const laterNote = placement.later.length
    ? ` ${placement.later.length === 1 ? "The next treatment round moves with it, to" : "The later treatment rounds move with it, to"} ${placement.later.map((l) => formatServiceDate(l.toDate)).join(" and ")}.`
    : "";
  return queueEmail(trx, {
    kind: "visit_rescheduled",
    to: visit.customer_email,
    ...visitRescheduledEmail({
      customerName: visit.customer_name,
      yardName: visit.yard_name,
      colonies: visit.colonies_expected,
      fromDate,
      toDate: placement.toDate,
      reason: `${reason}${laterNote}`,
      portalUrl: `${serverEnv().APP_URL}/portal/bookings`,
    }),
    customerId: visit.customer_id,
    visitId: visit.id,
    dedupeKey: `visit_rescheduled:${visit.id}:${fromDate}:${placement.toDate}`,
  });
}

/** What the customer reads as the reason: the note of a closed day; a plain sentence otherwise (crew notes stay inside). */
function customerReason(change: WorkingDayChange): string {
  if (change.intent === "close_day") return `The day was closed: ${change.note}`;
  return "Our crews cannot fit every visit booked on that day.";
}

/**
 * Closes or reopens a day or a crew's day, or sets a day's capacity, moving the visits that
 * no longer fit (see the notes at the top). Refuses with WorkingDayRefused; then nothing is
 * written. E-mails are queued in the transaction and handed to the worker after commit.
 */
export async function changeWorkingDay(db: Knex, change: WorkingDayChange, actorUserId: number | string, now = new Date()): Promise<WorkingDayResult> {
  const settings = await loadBusinessSettings(db);
  const today = dateInZone(now, settings.timeZone);
  if (calendarDaysBetween(today, change.date) < 0) throw new WorkingDayRefused("That day is past; choose today or a later day.", "date");
  for (let attempt = 1; ; attempt++) {
    try {
      const { result, emailIds } = await db.transaction((trx) => applyChange(trx, settings, change, Number(actorUserId), today));
      if (emailIds.length > 0) await requestEmailDelivery(emailIds);
      return result;
    } catch (error) {
      if (attempt < 5 && isRetryable(error)) continue;
      if (error instanceof RoomTakenMeanwhile) {
        throw new WorkingDayRefused("Nothing was changed: bookings kept taking the room on the days ahead while the visits were being moved. Try again.", "form");
      }
      throw error;
    }
  }
}

async function applyChange(
  trx: Knex.Transaction,
  settings: BusinessSettings,
  change: WorkingDayChange,
  actor: number,
  today: string,
): Promise<{ result: WorkingDayResult; emailIds: number[] }> {
  const { date } = change;
  const crew =
    change.intent === "close_crew_day" || change.intent === "reopen_crew_day"
      ? await trx("crews").where({ id: change.crewId }).first("id", "name", "active", "working_weekdays")
      : null;
  if ((change.intent === "close_crew_day" || change.intent === "reopen_crew_day") && !crew) throw new WorkingDayRefused("Choose a crew from the list.", "crewId");

  await lockServiceDay(trx, date);
  await trx("visits").where({ service_date: date }).whereIn("status", [...OPEN, ...UNDER_WAY]).orderBy("id").forUpdate().select("id");
  // A typical colony's loads read once for the three looks at the day below.
  settings = await withTypicalLoads(trx, settings);
  const before = await lockDayRoom(trx, settings, date);
  const dayBefore = (await trx("service_days").where({ service_date: date }).first())!;

  // 1. The change itself.
  let auditAction: string;
  let auditBefore: Record<string, unknown>;
  let auditAfter: Record<string, unknown>;
  const stamp = { updated_by: actor, updated_at: trx.fn.now() as unknown as Date };
  switch (change.intent) {
    case "close_day":
      if (dayBefore.closed) throw new WorkingDayRefused("That day is closed already.", "form");
      await trx("service_days").where({ service_date: date }).update({ closed: true, note: change.note, ...stamp });
      auditAction = "service_day.close";
      auditBefore = { closed: false, note: dayBefore.note };
      auditAfter = { closed: true, note: change.note };
      break;
    case "reopen_day":
      if (!dayBefore.closed) throw new WorkingDayRefused("That day is not closed.", "form");
      await trx("service_days").where({ service_date: date }).update({ closed: false, note: null, ...stamp });
      auditAction = "service_day.reopen";
      auditBefore = { closed: true, note: dayBefore.note };
      auditAfter = { closed: false };
      break;
    case "set_capacity":
      if (dayBefore.capacity_colonies === change.capacity) {
        throw new WorkingDayRefused(change.capacity === null ? "That day already takes the crews' estimate." : `That day's capacity is ${colonies(change.capacity)} already.`, "capacity");
      }
      await trx("service_days")
        .where({ service_date: date })
        .update({ capacity_colonies: change.capacity, ...(change.note ? { note: change.note } : {}), ...stamp });
      auditAction = "service_day.capacity";
      auditBefore = { capacity: dayBefore.capacity_colonies, effectiveCapacity: before.capacity };
      auditAfter = { capacity: change.capacity, note: change.note };
      break;
    case "close_crew_day": {
      const row = await trx("crew_days").where({ crew_id: crew!.id, service_date: date }).forUpdate().first();
      if (row?.closed) throw new WorkingDayRefused(`${crew!.name}'s day is closed already.`, "crewId");
      if (!crew!.active) throw new WorkingDayRefused(`${crew!.name} is inactive, so it does not work that day anyway.`, "crewId");
      const weekday = isoWeekdayOf(date);
      if (!(crew!.working_weekdays ?? []).map(Number).includes(weekday)) {
        throw new WorkingDayRefused(`${crew!.name} does not work on ${WEEKDAYS[weekday - 1].name}s, so there is nothing to close.`, "crewId");
      }
      await trx("crew_days")
        .insert({ crew_id: crew!.id, service_date: date, closed: true, note: change.note, updated_by: actor })
        .onConflict(["crew_id", "service_date"])
        .merge({ closed: true, note: change.note, ...stamp });
      auditAction = "crew_day.close";
      auditBefore = { closed: false };
      auditAfter = { crewId: Number(crew!.id), crewName: crew!.name, closed: true, note: change.note };
      break;
    }
    case "reopen_crew_day": {
      const row = await trx("crew_days").where({ crew_id: crew!.id, service_date: date }).forUpdate().first();
      if (!row?.closed) throw new WorkingDayRefused(`${crew!.name}'s day is not closed.`, "crewId");
      await trx("crew_days").where({ crew_id: crew!.id, service_date: date }).update({ closed: false, ...stamp });
      auditAction = "crew_day.reopen";
      auditBefore = { closed: true, note: row.note };
      auditAfter = { crewId: Number(crew!.id), crewName: crew!.name, closed: false };
      break;
    }
  }

  // 2. The day as it is now, under its lock; which visits no longer fit.
  const after = await lockDayRoom(trx, settings, date);
  const visits = await dayVisits(trx, date);
  const dayClosed = change.intent === "close_day";
  let draftRunsChanged = 0;

  const underWay = visits.filter((v) => (UNDER_WAY as readonly string[]).includes(v.status) || v.run_status === "in_progress" || v.run_status === "done");
  if (dayClosed && underWay.length > 0) {
    throw new WorkingDayRefused(`Nothing was changed: work on that day has started (${underWay.map(visitName).join(", ")}), so the day cannot be closed.`, "form");
  }
  if (change.intent === "close_crew_day") {
    const run = await trx("runs").where({ crew_id: crew!.id, service_date: date }).first("id", "status");
    if (run && run.status !== "draft") {
      const stops = visits.filter((v) => v.run_id === Number(run.id)).map((v) => `${v.yard_name} of ${v.customer_name}`);
      throw new WorkingDayRefused(
        `Nothing was changed: ${crew!.name}'s run for that day is ${run.status === "published" ? "published" : "under way"}${stops.length ? ` (${stops.join(", ")})` : ""}. ${
          run.status === "published" ? "Re-plan the day with published runs included (the run becomes a draft again), then close the crew's day." : "A run under way cannot be called off here."
        }`,
        "crewId",
      );
    }
  }

  let toMove: DayVisitRow[] = [];
  if (change.intent !== "reopen_day" && change.intent !== "reopen_crew_day") {
    const onPublished = (v: DayVisitRow) => v.run_status === "published";
    if (dayClosed) {
      toMove = visits.filter((v) => (OPEN as readonly string[]).includes(v.status)).sort(byBooking);
    } else {
      const takingRoom = visits.filter((v) => v.status !== "deferred").sort(byBooking);
      const movable = (v: DayVisitRow) => v.status === "scheduled" && !onPublished(v) && v.run_status !== "in_progress" && v.run_status !== "done";
      // Grams too: closing a crew with a daily gram limit takes its grams off the day.
      const doses = await yardDosesPerColony(trx, settings, takingRoom.map((v) => v.yard_id));
      const centigramsOf = (v: DayVisitRow) => centigramsFor(v.colonies_expected, doses.get(v.yard_id));
      const { move } = visitsBeyondCapacity(
        after.capacity,
        takingRoom.map((v) => ({ id: v.id, colonies: v.colonies_expected, grams: centigramsToGrams(centigramsOf(v)), movable: movable(v) })),
        after.gramsCapacity,
      );
      const fixed = takingRoom.filter((v) => !movable(v));
      const fixedColonies = fixed.reduce((sum, v) => sum + v.colonies_expected, 0);
      const fixedCentigrams = fixed.reduce((sum, v) => sum + centigramsOf(v), 0);
      const field = change.intent === "set_capacity" ? "capacity" : "form";
      if (fixedColonies > after.capacity) {
        throw new WorkingDayRefused(
          `Nothing was changed: the day could then take ${colonies(after.capacity)}, but visits on published runs or under way hold ${colonies(fixedColonies)} (${fixed.map(visitName).join(", ")}). Re-plan the day with published runs included first, or leave the day more room.`,
          field,
        );
      }
      if (after.gramsCapacity != null && fixedCentigrams > gramsToCentigrams(after.gramsCapacity)) {
        throw new WorkingDayRefused(
          `Nothing was changed: the day's crews could then apply ${after.gramsCapacity} g, but visits on published runs or under way take ${centigramsToGrams(fixedCentigrams)} g (${fixed.map(visitName).join(", ")}). Re-plan the day with published runs included first, or leave the day's crews more grams.`,
          field,
        );
      }
      const moveIds = new Set(move);
      toMove = takingRoom.filter((v) => moveIds.has(v.id));
    }
    const blocked = toMove.filter(onPublished);
    if (blocked.length > 0) {
      const runs = [...new Set(blocked.map((v) => v.crew_name))].join(" and ");
      throw new WorkingDayRefused(
        `Nothing was changed: ${blocked.length === 1 ? "a visit" : `${blocked.length} visits`} that would have to move ${blocked.length === 1 ? "is" : "are"} on ${runs}'s published run: ${blocked.map(visitName).join(", ")}. The crew has been sent that run. Re-plan the day with published runs included (they become drafts again), or move ${blocked.length === 1 ? "that visit" : "those visits"} yourself, then try again.`,
        "form",
      );
    }
  }

  // 3. Move what no longer fits to the next days with room.
  const tomorrow = addCalendarDays(today, 1);
  const start = calendarDaysBetween(tomorrow, addCalendarDays(date, 1)) > 0 ? addCalendarDays(date, 1) : tomorrow;
  const needs: MoveNeed[] = [];
  for (const visit of toMove) needs.push(await moveNeed(trx, visit, start));
  // A later round that must shift with its visit is on a published run (or one under way): the same rule.
  const laterBlocked = needs.flatMap((n) => n.later.filter((l) => l.runStatus !== null && l.runStatus !== "draft").map((l) => ({ need: n, round: l })));
  if (laterBlocked.length > 0) {
    throw new WorkingDayRefused(
      `Nothing was changed: moving ${laterBlocked.map((b) => `${b.need.visit.yard_name} of ${b.need.visit.customer_name}`).join(", ")} would move a later round of its course, which is on ${laterBlocked
        .map((b) => `${b.round.crewName}'s ${b.round.runStatus === "published" ? "published" : "started"} run of ${formatServiceDate(b.round.date)}`)
        .join(", ")}. Re-plan that day with published runs included first, or move the visit yourself.`,
      "form",
    );
  }
  const placements = needs.length > 0 ? await placeVisits(trx, settings, needs, start) : [];
  const reason = customerReason(change);
  const emailIds: number[] = [];
  const moved: MovedVisit[] = [];
  const changedRuns = new Set<number>();
  for (const placement of placements) {
    const v = placement.need.visit;
    if (await takeOffDraftRun(trx, v.id, v.run_id)) changedRuns.add(v.run_id!);
    for (const l of placement.later) if (await takeOffDraftRun(trx, l.round.id, l.round.runId)) changedRuns.add(l.round.runId!);
    const id = await applyPlacement(trx, placement, date, reason, actor);
    if (id !== null) emailIds.push(id);
    moved.push({ visitId: v.id, yardName: v.yard_name, customerName: v.customer_name, colonies: v.colonies_expected, fromDate: date, toDate: placement.toDate });
    for (const l of placement.later) {
      moved.push({ visitId: l.round.id, yardName: v.yard_name, customerName: v.customer_name, colonies: l.round.colonies, fromDate: l.round.date, toDate: l.toDate });
    }
  }

  // 4. Runs left behind: a closed day's draft runs go (they have no stops left); a closed
  //    crew's draft run goes with the stops still on it (they are planned again).
  if (dayClosed || change.intent === "close_crew_day") {
    const drafts = await trx("runs")
      .where({ service_date: date, status: "draft" })
      .modify((q) => {
        if (change.intent === "close_crew_day") q.where({ crew_id: crew!.id });
      })
      .pluck("id");
    if (drafts.length > 0) {
      await trx("runs").whereIn("id", drafts).delete();
      for (const id of drafts) changedRuns.add(Number(id));
    }
  }
  draftRunsChanged = changedRuns.size;

  const room = await lockDayRoom(trx, settings, date);
  await trx("audit_log").insert({
    actor_user_id: actor,
    action: auditAction,
    entity_type: "service_day",
    entity_id: date,
    // Grams too: a crew's daily gram limit can be what moves visits (null: grams do not bind the day).
    before: JSON.stringify({ ...auditBefore, booked: before.booked, gramsCapacity: before.gramsCapacity, gramsBooked: before.gramsBooked }),
    after: JSON.stringify({
      ...auditAfter,
      capacityNow: room.capacity,
      gramsCapacityNow: room.gramsCapacity,
      gramsBookedNow: room.gramsBooked,
      moved: moved.map((m) => ({ visitId: m.visitId, toDate: m.toDate })),
    }),
  });
  return { result: { date, intent: change.intent, moved, draftRunsChanged, room }, emailIds };
}

// ---------------------------------------------------------------------------------------
// Reading working days (the calendar's cells and its day panel)

export type CrewOnDay = {
  crewId: number;
  name: string;
  /** Working that day, or why not. */
  state: "working" | "closed" | "not_weekday";
  note: string | null;
  weekdays: number[];
};

export type WorkingDayState = DayRoom & {
  /** The whole day closed by the dispatcher (not just no crew working). */
  dayClosed: boolean;
  note: string | null;
  capacityOverride: number | null;
  /** Names of crews whose own day is closed. */
  closedCrews: string[];
};

export type WorkingDayDetail = WorkingDayState & {
  weekday: string;
  past: boolean;
  /** What the crews working that day can take by the estimate (the capacity without a dispatcher's figure). */
  estimate: number;
  crews: CrewOnDay[];
  openVisits: number;
  openColonies: number;
  /** Open visits on published runs (they never move by themselves, see the notes above). */
  onPublishedRuns: number;
};

/** The working-day state of every date from `from` to `to` (at most 62 days), for the calendar. */
export async function workingDaysBetween(db: Knex, from: string, to: string): Promise<WorkingDayState[]> {
  const settings = await loadBusinessSettings(db);
  const rooms = await roomBetween(db, settings, from, to);
  const days = await db("service_days").whereBetween("service_date", [from, to]).select("service_date", "closed", "note", "capacity_colonies");
  const crewDays = (await db("crew_days")
    .join("crews", "crews.id", "crew_days.crew_id")
    .whereBetween("crew_days.service_date", [from, to])
    .where("crew_days.closed", true)
    .orderBy("crews.name")
    .select("crew_days.service_date", "crews.name")) as { service_date: string; name: string }[];
  const dayOf = new Map(days.map((d) => [d.service_date, d]));
  return rooms.map((room) => {
    const day = dayOf.get(room.date);
    return {
      ...room,
      dayClosed: Boolean(day?.closed),
      note: day?.note ?? null,
      capacityOverride: day?.capacity_colonies ?? null,
      closedCrews: crewDays.filter((c) => c.service_date === room.date).map((c) => c.name),
    };
  });
}

/** Everything the calendar's day panel shows about one date. */
export async function workingDayDetail(db: Knex, date: string, now = new Date()): Promise<WorkingDayDetail> {
  const settings = await loadBusinessSettings(db);
  const [state] = await workingDaysBetween(db, date, date);
  const crewRows = await db("crews")
    .where({ active: true })
    .orderBy("name")
    .select("id", "name", "working_weekdays", "work_start", "work_end", "vaporizers", "max_colonies_per_day", "max_dose_grams_per_day");
  const closures = await db("crew_days").where({ service_date: date, closed: true }).select("crew_id", "note");
  const closedNote = new Map(closures.map((c) => [Number(c.crew_id), c.note]));
  const crews: CrewOnDay[] = [];
  const working: CrewForCapacity[] = [];
  for (const row of crewRows) {
    const weekdays = (row.working_weekdays ?? []).map(Number);
    const closed = closedNote.has(Number(row.id));
    const works = crewWorksOn({ active: true, workingWeekdays: weekdays }, date, { dayClosed: false, crewDayClosed: closed });
    crews.push({
      crewId: Number(row.id),
      name: row.name,
      state: works ? "working" : closed ? "closed" : "not_weekday",
      note: closedNote.get(Number(row.id)) ?? null,
      weekdays,
    });
    if (works) {
      working.push({
        workMinutes: parseClockTime(String(row.work_end).slice(0, 5)) - parseClockTime(String(row.work_start).slice(0, 5)),
        vaporizers: row.vaporizers,
        maxColoniesPerDay: row.max_colonies_per_day,
        maxDoseGramsPerDay: row.max_dose_grams_per_day == null ? null : Number(row.max_dose_grams_per_day),
      });
    }
  }
  const open = (await db("visits")
    .leftJoin("stops", "stops.visit_id", "visits.id")
    .leftJoin("runs", "runs.id", "stops.run_id")
    .where("visits.service_date", date)
    .whereIn("visits.status", [...OPEN])
    .select("visits.colonies_expected", "runs.status as run_status")) as { colonies_expected: number; run_status: string | null }[];
  return {
    ...state,
    weekday: WEEKDAYS[isoWeekdayOf(date) - 1].name,
    past: calendarDaysBetween(dateInZone(now, settings.timeZone), date) < 0,
    estimate: dayCapacityColonies(working, await withTypicalLoads(db, settings)),
    crews,
    openVisits: open.length,
    openColonies: open.reduce((sum, v) => sum + v.colonies_expected, 0),
    onPublishedRuns: open.filter((v) => v.run_status === "published").length,
  };
}
