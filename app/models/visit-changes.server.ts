import type { Knex } from "knex";
import { calendarDaysBetween } from "~/domain/courses";
import { bookingCancelledEmail, visitRescheduledEmail } from "~/emails/booking";
import { dateInZone } from "~/services/clock.server";
import { serverEnv } from "~/services/env.server";
import { requestEmailDelivery } from "~/services/jobs.server";
import { lockDayRoom } from "./capacity.server";
import { queueEmail } from "./emails.server";
import { loadBusinessSettings } from "./settings.server";
import type { TimePreference } from "./tables";

/** A change the dispatcher asked for that cannot be made, with the field it concerns. */
export class VisitChangeRefused extends Error {
  constructor(
    message: string,
    readonly field: "toDate" | "reason" | "timePreference" | "form",
  ) {
    super(message);
  }
}

const OPEN = ["scheduled", "deferred"];

async function lockOpenVisit(trx: Knex.Transaction, visitId: number) {
  const visit = await trx("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
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
      "yards.name as yard_name",
      "customers.id as customer_id",
      "customers.name as customer_name",
      "customers.email as customer_email",
    );
  if (!visit) throw new VisitChangeRefused("There is no visit with that number.", "form");
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

/** Moves a visit to another day with room for it, and tells the customer. */
export async function rescheduleVisit(
  db: Knex,
  input: { visitId: number; toDate: string; reason: string | null; actorUserId: number | string },
  now = new Date(),
) {
  const settings = await loadBusinessSettings(db);
  const today = dateInZone(now, settings.timeZone);
  if (calendarDaysBetween(today, input.toDate) < 0) throw new VisitChangeRefused("Choose today or a later day.", "toDate");
  const emailId = await db.transaction(async (trx) => {
    const visit = await lockOpenVisit(trx, input.visitId);
    if (visit.service_date === input.toDate) throw new VisitChangeRefused("The visit is already on that day.", "toDate");
    const room = await lockDayRoom(trx, settings, input.toDate);
    if (room.closed) throw new VisitChangeRefused("That day is closed for bookings.", "toDate");
    if (visit.colonies_expected > room.remaining) {
      throw new VisitChangeRefused(`That day has room for ${room.remaining} more colonies; this visit has ${visit.colonies_expected}.`, "toDate");
    }
    await takeOffRun(trx, visit.id);
    await trx("visits").where({ id: visit.id }).update({ service_date: input.toDate, status: "scheduled", defer_reason: null, updated_at: trx.fn.now() });
    if (visit.round_number === 1) {
      await trx("bookings")
        .whereIn("id", trx("courses").where({ id: visit.course_id }).select("booking_id"))
        .update({ service_date: input.toDate, updated_at: trx.fn.now() });
    }
    await trx("audit_log").insert({
      actor_user_id: Number(input.actorUserId),
      action: "visit.reschedule",
      entity_type: "visit",
      entity_id: String(visit.id),
      before: JSON.stringify({ serviceDate: visit.service_date }),
      after: JSON.stringify({ serviceDate: input.toDate, reason: input.reason }),
    });
    return queueEmail(trx, {
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
      }),
      customerId: visit.customer_id,
      visitId: visit.id,
      dedupeKey: `visit_rescheduled:${visit.id}:${visit.service_date}:${input.toDate}`,
    });
  });
  if (emailId !== null) await requestEmailDelivery([emailId]);
}

/** Cancels a visit (and, for a first round, its booking and course), and tells the customer. */
export async function cancelVisit(db: Knex, input: { visitId: number; reason: string; actorUserId: number | string }) {
  if (!input.reason.trim()) throw new VisitChangeRefused("Say why the visit is cancelled; the customer is told.", "reason");
  const emailId = await db.transaction(async (trx) => {
    const visit = await lockOpenVisit(trx, input.visitId);
    await takeOffRun(trx, visit.id);
    await trx("visits").where({ id: visit.id }).update({ status: "cancelled", notes: input.reason, updated_at: trx.fn.now() });
    const course = await trx("courses").where({ id: visit.course_id }).first("booking_id");
    if (visit.round_number === 1) {
      await trx("courses").where({ id: visit.course_id }).update({ status: "cancelled", updated_at: trx.fn.now() });
      if (course?.booking_id) {
        await trx("bookings").where({ id: course.booking_id }).update({ status: "cancelled", cancelled_at: trx.fn.now(), cancel_reason: input.reason, updated_at: trx.fn.now() });
      }
    }
    await trx("audit_log").insert({
      actor_user_id: Number(input.actorUserId),
      action: "visit.cancel",
      entity_type: "visit",
      entity_id: String(visit.id),
      before: JSON.stringify({ status: visit.status, serviceDate: visit.service_date }),
      after: JSON.stringify({ status: "cancelled", reason: input.reason }),
    });
    return queueEmail(trx, {
      kind: "booking_cancelled",
      to: visit.customer_email,
      ...bookingCancelledEmail({
        customerName: visit.customer_name,
        yardName: visit.yard_name,
        serviceDate: visit.service_date,
        reason: input.reason,
        portalUrl: `${serverEnv().APP_URL}/portal/book`,
      }),
      customerId: visit.customer_id,
      visitId: visit.id,
      dedupeKey: `booking_cancelled:${visit.id}`,
    });
  });
  if (emailId !== null) await requestEmailDelivery([emailId]);
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
