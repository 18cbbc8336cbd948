import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { bookYards } from "~/models/bookings.server";
import { cancelVisit, changeVisitTimeOfDay, rescheduleVisit, VisitChangeRefused } from "~/models/visit-changes.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { resetDatabase } from "./reset-database";

afterAll(() => db.destroy());

const day = addCalendarDays(dateInZone(new Date(), defaultBusinessSettings.timeZone), 7);
let actor: number;
let visitId: number;

beforeEach(async () => {
  await resetDatabase(db);
  await db("crews").insert({ name: "Crew A", start_label: "Shop", start_lat: 42.44, start_lng: -76.5, work_start: "08:00", work_end: "17:00", vaporizers: 2 });
  const [dispatcher] = await db("users").insert({ email: "d@example.test", password_hash: "x", role: "dispatcher", name: "D" }).returning("id");
  actor = dispatcher.id;
  const [user] = await db("users").insert({ email: "c@example.test", password_hash: "x", role: "customer", name: "Casey" }).returning("id");
  const [customer] = await db("customers").insert({ user_id: user.id, name: "Casey", email: "c@example.test" }).returning("id");
  const [yard] = await db("yards").insert({ customer_id: customer.id, name: "Ridge", lat: 42.5, lng: -76.3, colony_count: 6, brood_status: "brood" }).returning("id");
  const booked = await bookYards(db, { customerId: customer.id, userId: user.id, yardIds: [yard.id], serviceDate: day, timePreference: "any", notes: null });
  visitId = booked.visitIds[0];
});

describe("moving and cancelling visits", () => {
  it("moves a visit and its booking to a day with room, with an audit entry and an e-mail", async () => {
    const to = addCalendarDays(day, 2);
    await rescheduleVisit(db, { visitId, toDate: to, reason: "Rain", actorUserId: actor });
    expect((await db("visits").where({ id: visitId }).first())?.service_date).toBe(to);
    expect((await db("bookings").first())?.service_date).toBe(to);
    expect(await db("audit_log").where({ action: "visit.reschedule" })).toHaveLength(1);
    const mail = await db("email_log").where({ kind: "visit_rescheduled" }).first();
    expect(mail?.to_address).toBe("c@example.test");
  });

  it("refuses a move that would leave a course with brood shorter than the capped-brood period", async () => {
    // Source: Winston 1987, The Biology of the Honey Bee — a worker cell stays capped 12 days (from memory).
    // Only the first round is on the calendar; the others follow it 7 and 14 days later.
    const course = await db("courses").first("rounds_planned", "interval_days");
    expect(course).toEqual({ rounds_planned: 3, interval_days: 7 });
    // Round 2 is made when round 1 is finished; put it on the calendar as that would.
    const [second] = await db("visits")
      .insert({ course_id: (await db("visits").where({ id: visitId }).first())!.course_id, yard_id: (await db("yards").first())!.id, round_number: 2, service_date: addCalendarDays(day, 7), status: "scheduled", colonies_expected: 6 })
      .returning("id");
    // Round 2 two days early: 5 + 7 = 12 days, still enough.
    await rescheduleVisit(db, { visitId: second.id, toDate: addCalendarDays(day, 5), reason: null, actorUserId: actor });
    // One day earlier again: 4 + 7 = 11 days — refused at the day, nothing changed.
    const error = await rescheduleVisit(db, { visitId: second.id, toDate: addCalendarDays(day, 4), reason: null, actorUserId: actor }).catch((e) => e);
    expect(error).toBeInstanceOf(VisitChangeRefused);
    expect(error.field).toBe("toDate");
    expect(error.message).toMatch(/would span 11 days; rounds on a colony with brood must span at least 12 days/);
    expect((await db("visits").where({ id: second.id }).first())?.service_date).toBe(addCalendarDays(day, 5));
    // Moving round 1 later would shorten it too; moving it earlier, or round 2 later, is fine.
    await expect(rescheduleVisit(db, { visitId, toDate: addCalendarDays(day, 1), reason: null, actorUserId: actor })).rejects.toBeInstanceOf(VisitChangeRefused);
    await rescheduleVisit(db, { visitId: second.id, toDate: addCalendarDays(day, 8), reason: null, actorUserId: actor });
    expect((await db("visits").where({ id: second.id }).first())?.service_date).toBe(addCalendarDays(day, 8));
  });

  it("refuses a day without room, and changes nothing", async () => {
    const full = addCalendarDays(day, 3);
    await db("service_days").insert({ service_date: full, capacity_colonies: 4 });
    const error = await rescheduleVisit(db, { visitId, toDate: full, reason: null, actorUserId: actor }).catch((e) => e);
    expect(error).toBeInstanceOf(VisitChangeRefused);
    expect(error.message).toMatch(/room for 4 more colonies; this visit has 6/);
    expect((await db("visits").where({ id: visitId }).first())?.service_date).toBe(day);
    expect(await db("email_log").where({ kind: "visit_rescheduled" })).toHaveLength(0);
  });

  it("takes a moved visit off its run", async () => {
    const [crew] = await db("crews").select("id");
    const [run] = await db("runs").insert({ crew_id: crew.id, service_date: day }).returning("id");
    const at = new Date(`${day}T13:00:00Z`);
    await db("stops").insert({ run_id: run.id, visit_id: visitId, position: 0, arrive_at: at, start_at: at, leave_at: at });
    await rescheduleVisit(db, { visitId, toDate: addCalendarDays(day, 1), reason: null, actorUserId: actor });
    expect(await db("stops").where({ visit_id: visitId })).toHaveLength(0);
    expect((await db("runs").where({ id: run.id }).first())?.version).toBe(2);
  });

  it("changes the time of day of a visit and its booking, takes it off its run, and audits it; the same time again is refused", async () => {
    const [crew] = await db("crews").select("id");
    const [run] = await db("runs").insert({ crew_id: crew.id, service_date: day }).returning("id");
    const at = new Date(`${day}T13:00:00Z`);
    await db("stops").insert({ run_id: run.id, visit_id: visitId, position: 0, arrive_at: at, start_at: at, leave_at: at });
    expect(await changeVisitTimeOfDay(db, { visitId, timePreference: "afternoon", actorUserId: actor })).toEqual({ takenOffRun: true });
    expect((await db("visits").where({ id: visitId }).first())?.time_preference).toBe("afternoon");
    expect((await db("bookings").first())?.time_preference).toBe("afternoon");
    expect(await db("stops").where({ visit_id: visitId })).toHaveLength(0);
    expect((await db("runs").where({ id: run.id }).first())?.version).toBe(2);
    const audit = await db("audit_log").where({ action: "visit.time_of_day" });
    expect(audit).toHaveLength(1);
    expect(audit[0]).toMatchObject({ actor_user_id: actor, entity_id: String(visitId), before: { timePreference: "any" }, after: { timePreference: "afternoon", takenOffRun: true } });
    // No e-mail: the change came from the customer.
    expect(await db("email_log").whereNot({ kind: "booking_confirmation" })).toHaveLength(0);

    await expect(changeVisitTimeOfDay(db, { visitId, timePreference: "afternoon", actorUserId: actor })).rejects.toMatchObject({ field: "timePreference" });
    expect(await db("audit_log").where({ action: "visit.time_of_day" })).toHaveLength(1);
    // Off a run, it stays off: nothing to take off.
    expect(await changeVisitTimeOfDay(db, { visitId, timePreference: "morning", actorUserId: actor })).toEqual({ takenOffRun: false });
  });

  it("cancels a first-round visit with its booking and course, and needs a reason", async () => {
    await expect(cancelVisit(db, { visitId, reason: " ", actorUserId: actor })).rejects.toMatchObject({ field: "reason" });
    await cancelVisit(db, { visitId, reason: "Customer moved the hives", actorUserId: actor });
    expect((await db("visits").where({ id: visitId }).first())?.status).toBe("cancelled");
    expect((await db("bookings").first())?.status).toBe("cancelled");
    expect((await db("courses").first())?.status).toBe("cancelled");
    expect(await db("email_log").where({ kind: "booking_cancelled" })).toHaveLength(1);
    await expect(cancelVisit(db, { visitId, reason: "again", actorUserId: actor })).rejects.toThrow(/has not started/);
  });

  it("ends the course when the dispatcher cancels a later round, and keeps the booking and the rounds done", async () => {
    // Round 1 done; round 2 made on the calendar as finishing round 1 makes it.
    const first = (await db("visits").where({ id: visitId }).first())!;
    await db("visits").where({ id: visitId }).update({ status: "done" });
    const [second] = await db("visits")
      .insert({ course_id: first.course_id, yard_id: first.yard_id, round_number: 2, service_date: addCalendarDays(day, 7), status: "scheduled", colonies_expected: 6 })
      .returning("id");
    await cancelVisit(db, { visitId: second.id, reason: "The customer sold the colonies", actorUserId: actor });
    expect((await db("visits").where({ id: second.id }).first())?.status).toBe("cancelled");
    expect((await db("visits").where({ id: visitId }).first())?.status).toBe("done");
    // No round 3 will ever be made, so the course is over, not left active on the map.
    expect((await db("courses").where({ id: first.course_id }).first())?.status).toBe("cancelled");
    expect((await db("bookings").first())?.status).not.toBe("cancelled");
  });
});
