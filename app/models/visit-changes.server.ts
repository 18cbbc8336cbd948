import type { Knex } from "knex";
import { formatInstant, formatServiceDate } from "~/components/format";
import {
  changeDeadline,
  customerChangeBlock,
  customerMoveWindow,
  firstChangeableDate,
  isInMoveWindow,
  whomToContact,
  type CustomerChangeBlock,
  type MoveWindow,
} from "~/domain/booking-cutoff";
import { addCalendarDays, calendarDaysBetween } from "~/domain/courses";
import { centigramsToGrams, gramsToCentigrams } from "~/domain/dose";
import { CAPPED_BROOD_DAYS, projectedCourseSpanDays } from "~/domain/treatment-guards";
import type { BusinessSettings } from "~/domain/settings";
import { bookingCancelledEmail, visitRescheduledEmail } from "~/emails/booking";
import { customerChangedVisitEmail, type CustomerVisitChange } from "~/emails/booking-change";
import { dateInZone } from "~/services/clock.server";
import { serverEnv } from "~/services/env.server";
import { requestEmailDelivery } from "~/services/jobs.server";
import { mailFrom } from "~/services/mail.server";
import { BOOKING_HORIZON_DAYS } from "./bookings.server";
import { lockDaysForColonies, visitDosesPerColony } from "./capacity.server";
import { queueEmail } from "./emails.server";
import { senderName } from "./invoice-documents.server";
import { businessIdentity, loadBusinessSettings } from "./settings.server";
import type { TimePreference } from "./tables";

/** A change the dispatcher or the customer asked for that cannot be made, with the field it concerns. */
export class VisitChangeRefused extends Error {
  constructor(
    message: string,
    readonly field: "toDate" | "reason" | "timePreference" | "form",
  ) {
    super(message);
  }
}

const OPEN = ["scheduled", "deferred"];

async function lockVisit(trx: Knex.Transaction, visitId: number) {
  const visit = await trx("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .join("courses", "courses.id", "visits.course_id")
    .where("visits.id", visitId)
    .forUpdate("visits")
    .first(
      "visits.id",
      "visits.course_id",
      "visits.round_number",
      "visits.service_date",
      "visits.status",
      "visits.colonies_expected",
      "visits.time_preference",
      "courses.rounds_planned",
      "courses.interval_days",
      "yards.name as yard_name",
      "yards.address as yard_address",
      "customers.id as customer_id",
      "customers.name as customer_name",
      "customers.email as customer_email",
      "customers.phone as customer_phone",
    );
  if (!visit) throw new VisitChangeRefused("There is no visit with that number.", "form");
  return visit;
}

type LockedVisit = Awaited<ReturnType<typeof lockVisit>>;

async function lockOpenVisit(trx: Knex.Transaction, visitId: number) {
  const visit = await lockVisit(trx, visitId);
  if (!OPEN.includes(visit.status)) throw new VisitChangeRefused("Only a visit that has not started can be moved or cancelled.", "form");
  return visit;
}

/** Takes a visit off its run (if it was routed); the run is marked for re-planning. */
async function takeOffRun(trx: Knex.Transaction, visitId: number) {
  const stop = await trx("stops").where({ visit_id: visitId }).first("id", "run_id");
  if (!stop) return;
  await trx("stops").where({ id: stop.id }).delete();
  await trx("runs").where({ id: stop.run_id }).increment("version", 1).update({ updated_at: trx.fn.now() });
}

// ---------------------------------------------------------------------------------------
// The customer's own changes (portal): rules, contact, and the later rounds of the course

/** How the business is reached, for "after the cut-off, call …" (settings, name falling back to the mail sender's). */
export function businessContact(settings: BusinessSettings): { name: string; phone: string; email: string } {
  return { name: businessIdentity(settings, senderName(mailFrom())).name, phone: settings.businessPhone, email: settings.contactEmail };
}

/** Visit ids (of those given) that sit on a run the crew has (published, under way or done). */
async function visitsOnPublishedRuns(db: Knex, visitIds: readonly number[]): Promise<Set<number>> {
  if (visitIds.length === 0) return new Set();
  const rows = await db("stops").join("runs", "runs.id", "stops.run_id").whereIn("stops.visit_id", visitIds).whereNot("runs.status", "draft").select("stops.visit_id");
  return new Set(rows.map((r) => Number(r.visit_id)));
}

/** The sentence that tells the customer why they cannot change a visit here, and whom to call. */
export function customerChangeBlockMessage(block: CustomerChangeBlock, input: { serviceDate: string; settings: BusinessSettings }): string {
  const contact = whomToContact(businessContact(input.settings));
  switch (block) {
    case "cutoff": {
      const deadline = formatInstant(changeDeadline(input.serviceDate, input.settings.customerChangeCutoffHours, input.settings.timeZone), input.settings.timeZone);
      return `Visits can be changed here until ${input.settings.customerChangeCutoffHours} hours before their day begins; for this visit that was ${deadline}. To change or cancel it now, ${contact}.`;
    }
    case "published":
      return `This visit is on the crew's run for ${formatServiceDate(input.serviceDate)} already, so it can no longer be changed here. To change or cancel it, ${contact}.`;
    case "deferred":
      return `We are finding a new day for this visit, so it cannot be changed here. To change or cancel it, ${contact}.`;
    case "cancelled":
      return "This visit is cancelled.";
    case "started":
      return "This visit has started or is done, so it can no longer be changed.";
  }
}

/** A round of the course, as the customer's change sees it. */
export type CourseRoundState = { id: number; roundNumber: number; date: string; status: string; colonies: number; onPublishedRun: boolean };

/** What a customer's move or cancel of one round touches: the window of days, and the later rounds that follow it. */
export type CustomerChangeScope = {
  rounds: CourseRoundState[];
  previousRound: CourseRoundState | null;
  /** Later rounds still to come (scheduled or deferred): they move with a move and are cancelled with a cancel. */
  laterRounds: CourseRoundState[];
  /** A later round the change cannot carry along (started, done, or on the crew's run), if any. */
  laterBlocked: CourseRoundState | null;
  window: MoveWindow | null;
};

/** The rounds of the visit's course and what a customer's change of it would touch (locks them when given a transaction). */
export async function customerChangeScope(
  db: Knex,
  visit: { id: number; course_id: number; round_number: number; interval_days: number },
  settings: BusinessSettings,
  now: Date,
  lock = false,
): Promise<CustomerChangeScope> {
  const query = db("visits").where({ course_id: visit.course_id }).orderBy("round_number").orderBy("id");
  if (lock) query.forUpdate();
  const rows = await query.select("id", "round_number", "service_date", "status", "colonies_expected");
  const published = await visitsOnPublishedRuns(db, rows.map((r) => Number(r.id)));
  const rounds: CourseRoundState[] = rows.map((r) => ({
    id: Number(r.id),
    roundNumber: r.round_number,
    date: r.service_date,
    status: r.status,
    colonies: r.colonies_expected,
    onPublishedRun: published.has(Number(r.id)),
  }));
  const previousRound = [...rounds].reverse().find((r) => r.roundNumber < visit.round_number && r.status !== "cancelled") ?? null;
  const later = rounds.filter((r) => r.roundNumber > visit.round_number && r.status !== "cancelled");
  const laterRounds = later.filter((r) => OPEN.includes(r.status));
  const laterBlocked = later.find((r) => !OPEN.includes(r.status) || r.onPublishedRun) ?? null;
  const today = dateInZone(now, settings.timeZone);
  const window = customerMoveWindow({
    firstChangeable: firstChangeableDate(now, settings.customerChangeCutoffHours, settings.timeZone),
    lastBookable: addCalendarDays(today, BOOKING_HORIZON_DAYS),
    previousRoundDate: previousRound?.date ?? null,
    intervalDays: visit.interval_days,
  });
  return { rounds, previousRound, laterRounds, laterBlocked, window };
}

/**
 * Locks every round of the visit's course in round order, then the visit with its details. A
 * customer's change touches the later rounds too; taking them all in one order first means two
 * changes of the same course cannot each hold a round the other waits for.
 */
async function lockVisitWithCourse(trx: Knex.Transaction, visitId: number) {
  const own = await trx("visits").where({ id: visitId }).first("course_id");
  if (own) await trx("visits").where({ course_id: own.course_id }).orderBy("round_number").orderBy("id").forUpdate().select("id");
  return lockVisit(trx, visitId);
}

/** Refuses a customer's change of a visit that is not theirs, not open to them, or past the cut-off. */
async function assertCustomerMayChange(trx: Knex.Transaction, visit: LockedVisit, customerId: number | string, settings: BusinessSettings, now: Date) {
  // Another customer's visit looks like no visit at all.
  if (String(visit.customer_id) !== String(customerId)) throw new VisitChangeRefused("There is no visit with that number in your account.", "form");
  const onRun = await visitsOnPublishedRuns(trx, [Number(visit.id)]);
  const block = customerChangeBlock({
    status: visit.status,
    onPublishedRun: onRun.has(Number(visit.id)),
    serviceDate: visit.service_date,
    now,
    cutoffHours: settings.customerChangeCutoffHours,
    timeZone: settings.timeZone,
  });
  if (block) throw new VisitChangeRefused(customerChangeBlockMessage(block, { serviceDate: visit.service_date, settings }), "form");
}

/** Why a later round of the course keeps the customer from changing this one. */
export function laterBlockedMessage(round: CourseRoundState, settings: BusinessSettings): string {
  const what = OPEN.includes(round.status) ? `is on the crew's run for ${formatServiceDate(round.date)} already` : "has started or is done";
  return `Round ${round.roundNumber} of this course ${what}, so this visit can no longer be changed here. To change it, ${whomToContact(businessContact(settings))}.`;
}

/** The active dispatchers and owners, who hear of every change a customer makes. */
async function dispatchRecipients(trx: Knex.Transaction) {
  return trx("users").whereIn("role", ["dispatcher", "owner"]).whereNull("disabled_at").orderBy("id").select("id", "email", "name");
}

async function queueDispatchEmails(trx: Knex.Transaction, visit: LockedVisit, change: CustomerVisitChange, auditId: number): Promise<number[]> {
  const ids: number[] = [];
  for (const user of await dispatchRecipients(trx)) {
    const id = await queueEmail(trx, {
      kind: "customer_visit_change",
      to: user.email,
      ...customerChangedVisitEmail({
        recipientName: user.name,
        customerName: visit.customer_name,
        customerEmail: visit.customer_email,
        customerPhone: visit.customer_phone,
        yardName: visit.yard_name,
        yardAddress: visit.yard_address,
        colonies: visit.colonies_expected,
        roundNumber: visit.round_number,
        roundsPlanned: visit.rounds_planned,
        change,
        visitUrl: `${serverEnv().APP_URL}/dispatch/visits/${visit.id}`,
      }),
      visitId: Number(visit.id),
      dedupeKey: `customer_visit_change:${auditId}:${user.id}`,
    });
    if (id !== null) ids.push(id);
  }
  return ids;
}

// ---------------------------------------------------------------------------------------
// Moving

type Move = { visitId: number; roundNumber: number; fromDate: string; toDate: string; colonies: number; takesRoom: boolean };

/**
 * Locks every day the moves land on (in date order, with the capacity rule of
 * lockDaysForColonies) and refuses at the date field when one is closed or lacks room. The
 * colonies of a moved visit that leave a day count as freed there, so a course shifted by its
 * own interval does not collide with itself.
 */
async function lockRoomForMoves(trx: Knex.Transaction, settings: BusinessSettings, moves: readonly Move[]) {
  // Grams too, in centigrams: each move's colonies × its yard's dose per colony.
  const doses = await visitDosesPerColony(trx, settings, moves.map((m) => m.visitId));
  const cg = (move: Move) => move.colonies * gramsToCentigrams(doses.get(move.visitId) ?? 0);
  const adding = new Map<string, { colonies: number; centigrams: number }>();
  const add = (date: string, colonies: number, centigrams: number) => {
    const sum = adding.get(date) ?? { colonies: 0, centigrams: 0 };
    adding.set(date, { colonies: sum.colonies + colonies, centigrams: sum.centigrams + centigrams });
  };
  for (const move of moves) add(move.toDate, move.colonies, cg(move));
  for (const move of moves) if (move.takesRoom && adding.has(move.fromDate)) add(move.fromDate, -move.colonies, -cg(move));
  const checks = await lockDaysForColonies(trx, settings, [...adding].map(([date, n]) => ({ date, adding: n.colonies, addingGrams: centigramsToGrams(n.centigrams) })));
  const main = moves[0];
  for (const check of checks) {
    if (check.refusal === null || (check.refusal === "full" && check.adding <= 0 && check.addingGrams <= 0)) continue;
    const move = moves.find((m) => m.toDate === check.date)!;
    const moveGrams = centigramsToGrams(cg(move));
    const onlyGrams = check.gramsShort && check.adding <= check.remaining;
    if (move === main) {
      if (check.refusal === "closed") throw new VisitChangeRefused("That day is closed for bookings. Choose another day.", "toDate");
      if (onlyGrams) throw new VisitChangeRefused(`That day's crews can apply ${check.gramsRemaining} g more; this visit needs ${moveGrams} g. Choose another day.`, "toDate");
      throw new VisitChangeRefused(`That day has room for ${check.remaining} more colonies; this visit has ${main.colonies}. Choose another day.`, "toDate");
    }
    const day = formatServiceDate(check.date);
    const why =
      check.refusal === "closed"
        ? "that day is closed for bookings"
        : onlyGrams
          ? `that day's crews can apply ${check.gramsRemaining} g more and the round needs ${moveGrams} g`
          : `that day has room for ${check.remaining} more colonies and the round has ${move.colonies}`;
    throw new VisitChangeRefused(`Round ${move.roundNumber} would move with this visit to ${day}, but ${why}. Choose another day.`, "toDate");
  }
}

/**
 * Refuses moves that would shorten a course with brood below the capped-brood period (its
 * rounds all on the calendar, cancelled ones left out). A course already shorter than that
 * (made before the rule) may still be moved as long as it gets no shorter.
 */
async function refuseShorterThanCappedBrood(trx: Knex.Transaction, courseId: number, moves: readonly Move[]): Promise<void> {
  const course = await trx("courses").where({ id: courseId }).first("rounds_planned", "interval_days");
  if (!course || course.rounds_planned < 2) return;
  const rounds = await trx("visits").where({ course_id: courseId }).whereNot({ status: "cancelled" }).select("id", "service_date");
  const movedTo = new Map(moves.map((m) => [m.visitId, m.toDate]));
  const before = rounds.map((r) => r.service_date as string);
  const after = rounds.map((r) => movedTo.get(Number(r.id)) ?? (r.service_date as string));
  const spanBefore = projectedCourseSpanDays(before, course.rounds_planned, course.interval_days);
  const spanAfter = projectedCourseSpanDays(after, course.rounds_planned, course.interval_days);
  if (spanAfter < CAPPED_BROOD_DAYS && spanAfter < spanBefore) {
    throw new VisitChangeRefused(
      `The course's ${course.rounds_planned} rounds would span ${spanAfter} days; rounds on a colony with brood must span at least ${CAPPED_BROOD_DAYS} days, the time a worker cell stays capped. Choose a later day.`,
      "toDate",
    );
  }
}

/**
 * Moves a visit to another day with room for it, and tells the customer.
 *
 * The dispatcher moves the one visit. A customer (`byCustomerId`, in the portal) may move
 * only their own scheduled visit, not on a crew's published run, before the cut-off in
 * settings, to a day in the course's spacing window (see customerMoveWindow); later rounds
 * of the course still to come move by the same number of days, so the rounds stay as far
 * apart as planned; and the dispatchers are e-mailed what changed.
 */
export async function rescheduleVisit(
  db: Knex,
  input: { visitId: number; toDate: string; reason: string | null; actorUserId: number | string; byCustomerId?: number | string | null },
  now = new Date(),
) {
  const settings = await loadBusinessSettings(db);
  const today = dateInZone(now, settings.timeZone);
  const byCustomer = input.byCustomerId !== undefined && input.byCustomerId !== null;
  if (calendarDaysBetween(today, input.toDate) < 0) throw new VisitChangeRefused("Choose today or a later day.", "toDate");
  const emailIds = await db.transaction(async (trx) => {
    const visit = byCustomer ? await lockVisitWithCourse(trx, input.visitId) : await lockOpenVisit(trx, input.visitId);
    if (byCustomer) await assertCustomerMayChange(trx, visit, input.byCustomerId!, settings, now);
    if (visit.service_date === input.toDate) throw new VisitChangeRefused("The visit is already on that day.", "toDate");

    const moves: Move[] = [
      { visitId: Number(visit.id), roundNumber: visit.round_number, fromDate: visit.service_date, toDate: input.toDate, colonies: visit.colonies_expected, takesRoom: visit.status === "scheduled" },
    ];
    if (byCustomer) {
      const scope = await customerChangeScope(trx, visit, settings, now, true);
      if (scope.laterBlocked) throw new VisitChangeRefused(laterBlockedMessage(scope.laterBlocked, settings), "form");
      if (!isInMoveWindow(scope.window, input.toDate)) {
        const contact = whomToContact(businessContact(settings));
        if (!scope.window) throw new VisitChangeRefused(`No day is left that this visit can move to. Cancel it, or ${contact}.`, "toDate");
        const spacing = scope.previousRound
          ? `: round ${visit.round_number} stays about ${visit.interval_days} days after round ${scope.previousRound.roundNumber} (${formatServiceDate(scope.previousRound.date)})`
          : "";
        throw new VisitChangeRefused(`Choose a day from ${formatServiceDate(scope.window.first)} to ${formatServiceDate(scope.window.last)}${spacing}.`, "toDate");
      }
      const shift = calendarDaysBetween(visit.service_date, input.toDate);
      for (const round of scope.laterRounds) {
        moves.push({
          visitId: round.id,
          roundNumber: round.roundNumber,
          fromDate: round.date,
          toDate: addCalendarDays(round.date, shift),
          colonies: round.colonies,
          takesRoom: round.status === "scheduled",
        });
      }
    }
    await refuseShorterThanCappedBrood(trx, visit.course_id, moves);
    await lockRoomForMoves(trx, settings, moves);

    for (const move of moves) {
      await takeOffRun(trx, move.visitId);
      await trx("visits").where({ id: move.visitId }).update({ service_date: move.toDate, status: "scheduled", defer_reason: null, updated_at: trx.fn.now() });
    }
    if (visit.round_number === 1) {
      await trx("bookings")
        .whereIn("id", trx("courses").where({ id: visit.course_id }).select("booking_id"))
        .update({ service_date: input.toDate, updated_at: trx.fn.now() });
    }
    const [audit] = await trx("audit_log")
      .insert({
        actor_user_id: Number(input.actorUserId),
        action: "visit.reschedule",
        entity_type: "visit",
        entity_id: String(visit.id),
        before: JSON.stringify({ serviceDate: visit.service_date }),
        after: JSON.stringify({ serviceDate: input.toDate, reason: input.reason, ...(byCustomer ? { byCustomer: true } : {}) }),
      })
      .returning("id");
    const auditId = Number(audit.id);
    for (const move of moves.slice(1)) {
      await trx("audit_log").insert({
        actor_user_id: Number(input.actorUserId),
        action: "visit.reschedule",
        entity_type: "visit",
        entity_id: String(move.visitId),
        before: JSON.stringify({ serviceDate: move.fromDate }),
        after: JSON.stringify({ serviceDate: move.toDate, reason: `Moved with round ${visit.round_number} to keep the course's spacing.`, byCustomer: true }),
      });
    }

    const laterRounds = moves.slice(1).map((m) => ({ roundNumber: m.roundNumber, fromDate: m.fromDate, toDate: m.toDate }));
    const customerEmailId = await queueEmail(trx, {
      kind: "visit_rescheduled",
      to: visit.customer_email,
      ...visitRescheduledEmail({
        customerName: visit.customer_name,
        yardName: visit.yard_name,
        colonies: visit.colonies_expected,
        fromDate: visit.service_date,
        toDate: input.toDate,
        reason: input.reason,
        portalUrl: `${serverEnv().APP_URL}/portal/bookings`,
        ...(byCustomer ? { byCustomer: true, roundNumber: visit.round_number, laterRounds } : {}),
      }),
      customerId: visit.customer_id,
      visitId: visit.id,
      // A customer may move a visit back and forth: each change is its own e-mail.
      dedupeKey: byCustomer ? `visit_rescheduled:${visit.id}:change:${auditId}` : `visit_rescheduled:${visit.id}:${visit.service_date}:${input.toDate}`,
    });
    const ids = customerEmailId === null ? [] : [customerEmailId];
    if (byCustomer) ids.push(...(await queueDispatchEmails(trx, visit, { kind: "moved", fromDate: visit.service_date, toDate: input.toDate, laterRounds }, auditId)));
    return ids;
  });
  await requestEmailDelivery(emailIds);
}

// ---------------------------------------------------------------------------------------
// Cancelling

/** What a customer's cancellation notes on the visit and booking when they give no reason. */
export const CUSTOMER_CANCEL_NOTE = "Cancelled by the customer in the portal.";

/**
 * Cancels a visit and tells the customer.
 *
 * The dispatcher cancels the one visit and must say why; the course ends with it (its next
 * round would only be made when this one is finished), and a first round takes its booking
 * with it. A customer (`byCustomerId`) may cancel only their own scheduled visit,
 * not on a crew's published run, before the cut-off, with or without a reason; their
 * cancellation ends the course: the later rounds still to come are cancelled too (a course's
 * rounds only work in order, one after another), the course and its booking are cancelled,
 * rounds already done stay as they are, and the dispatchers are e-mailed.
 */
export async function cancelVisit(
  db: Knex,
  input: { visitId: number; reason: string | null; actorUserId: number | string; byCustomerId?: number | string | null },
  now = new Date(),
) {
  const byCustomer = input.byCustomerId !== undefined && input.byCustomerId !== null;
  const reason = input.reason?.trim() ? input.reason.trim() : null;
  if (!byCustomer && !reason) throw new VisitChangeRefused("Say why the visit is cancelled; the customer is told.", "reason");
  const settings = byCustomer ? await loadBusinessSettings(db) : null;
  const emailIds = await db.transaction(async (trx) => {
    const visit = byCustomer ? await lockVisitWithCourse(trx, input.visitId) : await lockOpenVisit(trx, input.visitId);
    let later: CourseRoundState[] = [];
    if (byCustomer) {
      await assertCustomerMayChange(trx, visit, input.byCustomerId!, settings!, now);
      const scope = await customerChangeScope(trx, visit, settings!, now, true);
      if (scope.laterBlocked) throw new VisitChangeRefused(laterBlockedMessage(scope.laterBlocked, settings!), "form");
      later = scope.laterRounds;
    }
    const note = reason ?? CUSTOMER_CANCEL_NOTE;
    for (const id of [Number(visit.id), ...later.map((r) => r.id)]) {
      await takeOffRun(trx, id);
      await trx("visits").where({ id }).update({ status: "cancelled", notes: note, updated_at: trx.fn.now() });
    }
    const course = await trx("courses").where({ id: visit.course_id }).first("booking_id");
    // The next round is made only when this one is finished, so a cancelled round ends its
    // course whoever cancels it: left active, the yard would show a course that never goes on.
    await trx("courses").where({ id: visit.course_id }).update({ status: "cancelled", updated_at: trx.fn.now() });
    if (visit.round_number === 1 || byCustomer) {
      if (course?.booking_id) {
        await trx("bookings").where({ id: course.booking_id }).update({ status: "cancelled", cancelled_at: trx.fn.now(), cancel_reason: note, updated_at: trx.fn.now() });
      }
    }
    const [audit] = await trx("audit_log")
      .insert({
        actor_user_id: Number(input.actorUserId),
        action: "visit.cancel",
        entity_type: "visit",
        entity_id: String(visit.id),
        before: JSON.stringify({ status: visit.status, serviceDate: visit.service_date }),
        after: JSON.stringify({ status: "cancelled", reason, ...(byCustomer ? { byCustomer: true } : {}) }),
      })
      .returning("id");
    const auditId = Number(audit.id);
    for (const round of later) {
      await trx("audit_log").insert({
        actor_user_id: Number(input.actorUserId),
        action: "visit.cancel",
        entity_type: "visit",
        entity_id: String(round.id),
        before: JSON.stringify({ status: round.status, serviceDate: round.date }),
        after: JSON.stringify({ status: "cancelled", reason: `Cancelled with round ${visit.round_number}.`, byCustomer: true }),
      });
    }
    const laterRounds = later.map((r) => ({ roundNumber: r.roundNumber, date: r.date }));
    const customerEmailId = await queueEmail(trx, {
      kind: "booking_cancelled",
      to: visit.customer_email,
      ...bookingCancelledEmail({
        customerName: visit.customer_name,
        yardName: visit.yard_name,
        serviceDate: visit.service_date,
        reason,
        portalUrl: `${serverEnv().APP_URL}/portal/book`,
        ...(byCustomer ? { byCustomer: true, roundNumber: visit.round_number, laterRounds } : {}),
      }),
      customerId: visit.customer_id,
      visitId: visit.id,
      dedupeKey: `booking_cancelled:${visit.id}`,
    });
    const ids = customerEmailId === null ? [] : [customerEmailId];
    if (byCustomer) ids.push(...(await queueDispatchEmails(trx, visit, { kind: "cancelled", serviceDate: visit.service_date, laterRounds, reason }, auditId)));
    return ids;
  });
  await requestEmailDelivery(emailIds);
}

/**
 * Changes the time of day a visit asks for (e.g. the customer phoned). A visit already on a
 * run is taken off it, since its window changed: the day is planned again. A first round's
 * booking follows. No e-mail: the change comes from the customer.
 */
export async function changeVisitTimeOfDay(db: Knex, input: { visitId: number; timePreference: TimePreference; actorUserId: number | string }): Promise<{ takenOffRun: boolean }> {
  return db.transaction(async (trx) => {
    const visit = await lockOpenVisit(trx, input.visitId);
    if (visit.time_preference === input.timePreference) throw new VisitChangeRefused("The visit already asks for that time of day.", "timePreference");
    const onRun = await trx("stops").where({ visit_id: visit.id }).first("id");
    await takeOffRun(trx, visit.id);
    await trx("visits").where({ id: visit.id }).update({ time_preference: input.timePreference, updated_at: trx.fn.now() });
    if (visit.round_number === 1) {
      await trx("bookings")
        .whereIn("id", trx("courses").where({ id: visit.course_id }).select("booking_id"))
        .update({ time_preference: input.timePreference, updated_at: trx.fn.now() });
    }
    await trx("audit_log").insert({
      actor_user_id: Number(input.actorUserId),
      action: "visit.time_of_day",
      entity_type: "visit",
      entity_id: String(visit.id),
      before: JSON.stringify({ timePreference: visit.time_preference }),
      after: JSON.stringify({ timePreference: input.timePreference, takenOffRun: Boolean(onRun) }),
    });
    return { takenOffRun: Boolean(onRun) };
  });
}
