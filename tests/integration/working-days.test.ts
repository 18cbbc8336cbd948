import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { describeAuditEntry } from "~/domain/audit-descriptions";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { bookYards, BookingRefused } from "~/models/bookings.server";
import { roomBetween } from "~/models/capacity.server";
import { planServiceDay, publishRun } from "~/models/day-plan.server";
import { changeWorkingDay, workingDayDetail, WorkingDayRefused } from "~/models/working-days.server";
import { action as calendarAction } from "~/routes/dispatch/calendar";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { sessionStorage } from "~/services/session.server";
import { resetDatabase } from "./reset-database";

// Working days: closing a day or a crew's day, or cutting a day's capacity, moves the visits
// that no longer fit to the next days with room — with the customers' e-mails and the audit
// entries, in one transaction — and never loses, doubles or overfills anything, even with
// bookings arriving at the same moment.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

const settings = defaultBusinessSettings;
const today = dateInZone(new Date(), settings.timeZone);
const D = addCalendarDays(today, 20);
const travel = { osrmUrl: null };

let seq = 0;
async function aUser(role: "crew" | "dispatcher" | "customer", name = `${role} ${seq}`) {
  seq++;
  const [user] = await db("users")
    .insert({ email: `${role}${seq}.${Math.random().toString(36).slice(2, 8)}@example.test`, password_hash: "x", role, name })
    .returning("id");
  return Number(user.id);
}

async function aCrew(name: string, maxColonies: number | null = null): Promise<number> {
  const [crew] = await db("crews")
    .insert({ name, start_label: `${name} shop`, start_lat: 42.44, start_lng: -76.5, work_start: "08:00", work_end: "17:00", vaporizers: 2, max_colonies_per_day: maxColonies })
    .returning("id");
  const member = await aUser("crew", `${name} member`);
  await db("crew_members").insert({ crew_id: crew.id, user_id: member });
  return Number(crew.id);
}

type Booked = { customerId: number; email: string; yardId: number; visitId: number; bookingId: number; colonies: number };

async function aCustomer(colonies: number, name = `Keeper ${seq + 1}`) {
  const userId = await aUser("customer");
  const email = `keeper${seq}.${Math.random().toString(36).slice(2, 8)}@example.test`;
  const [customer] = await db("customers").insert({ user_id: userId, name, email }).returning("id");
  const [yard] = await db("yards")
    .insert({ customer_id: customer.id, name: `${name}'s yard`, lat: 42.45 + (seq % 10) * 0.003, lng: -76.48, colony_count: colonies, brood_status: "broodless" })
    .returning("id");
  return { userId, customerId: Number(customer.id), yardId: Number(yard.id), email };
}

/** A customer with one yard booked on `date` through the real booking path. */
async function aBooking(colonies: number, date: string, name?: string): Promise<Booked> {
  const c = await aCustomer(colonies, name);
  const result = await bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yardId], serviceDate: date, timePreference: "any", notes: null });
  return { customerId: c.customerId, email: c.email, yardId: c.yardId, visitId: result.visitIds[0], bookingId: result.bookingIds[0], colonies };
}

async function capacityOf(date: string, capacity: number) {
  await db("service_days").insert({ service_date: date, capacity_colonies: capacity }).onConflict("service_date").merge({ capacity_colonies: capacity });
}

async function dateOf(visitId: number): Promise<string> {
  return (await db("visits").where({ id: visitId }).first("service_date"))!.service_date;
}

/** No day from D − 1 to D + 70 holds more colonies than it can take. */
async function expectNoDayOverfilled() {
  const rooms = await roomBetween(db, settings, addCalendarDays(D, -1), addCalendarDays(D, 70));
  for (const room of rooms) expect(room.booked, room.date).toBeLessThanOrEqual(room.capacity);
}

async function refusal(p: Promise<unknown>): Promise<WorkingDayRefused> {
  return p.then(
    () => {
      throw new Error("expected a refusal");
    },
    (e) => {
      expect(e).toBeInstanceOf(WorkingDayRefused);
      return e as WorkingDayRefused;
    },
  );
}

describe("closing a day", () => {
  it("moves each visit to the next day with room, in booking order, with one e-mail per customer and the audit entries", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    await capacityOf(addCalendarDays(D, 1), 12);
    await capacityOf(addCalendarDays(D, 2), 15);
    await aBooking(4, addCalendarDays(D, 1)); // D + 1 has 8 left
    const five = await aBooking(5, D, "Ann");
    const six = await aBooking(6, D, "Bo");
    const seven = await aBooking(7, D, "Cy");
    const eight = await aBooking(8, D, "Di");

    const result = await changeWorkingDay(db, { intent: "close_day", date: D, note: "Heavy rain forecast" }, dispatcher);

    // 5 → D+1 (3 left there); 6 and 7 → D+2 (13 of 15); 8 → D+3.
    expect(result.moved.map((m) => [m.visitId, m.toDate])).toEqual([
      [five.visitId, addCalendarDays(D, 1)],
      [six.visitId, addCalendarDays(D, 2)],
      [seven.visitId, addCalendarDays(D, 2)],
      [eight.visitId, addCalendarDays(D, 3)],
    ]);
    for (const m of result.moved) {
      expect(await db("visits").where({ id: m.visitId }).first("service_date", "status")).toEqual({ service_date: m.toDate, status: "scheduled" });
    }
    // The first round's booking follows its visit.
    expect(await db("bookings").where({ id: eight.bookingId }).first("service_date")).toEqual({ service_date: addCalendarDays(D, 3) });
    expect(result.room).toMatchObject({ capacity: 0, booked: 0, closed: true });
    await expectNoDayOverfilled();

    // One e-mail per customer, queued in the outbox, to each of them.
    const emails = await db("email_log").where({ kind: "visit_rescheduled" }).orderBy("id").select("to_address", "visit_id", "subject");
    expect(emails.map((e) => e.to_address).sort()).toEqual([five, six, seven, eight].map((b) => b.email).sort());
    expect(emails.map((e) => Number(e.visit_id)).sort()).toEqual([five, six, seven, eight].map((b) => b.visitId).sort());

    // The closure and each move are audited.
    const close = await db("audit_log").where({ action: "service_day.close" }).first();
    expect(close).toMatchObject({ actor_user_id: dispatcher, entity_type: "service_day", entity_id: D });
    expect(close!.after).toMatchObject({ closed: true, note: "Heavy rain forecast", capacityNow: 0 });
    expect((close!.after as { moved: unknown[] }).moved).toHaveLength(4);
    expect(describeAuditEntry({ action: "service_day.close", entityType: "service_day", entityId: D, before: close!.before, after: close!.after })).toMatch(
      /^Closed .+, moving 4 visits to other days: Heavy rain forecast$/,
    );
    const moves = await db("audit_log").where({ action: "visit.reschedule" }).orderBy("id");
    expect(moves.map((m) => m.entity_id)).toEqual([five, six, seven, eight].map((b) => String(b.visitId)));
    expect(moves[0].after).toEqual({ serviceDate: addCalendarDays(D, 1), reason: "The day was closed: Heavy rain forecast" });

    // The closed day takes no booking.
    await expect(aBooking(2, D)).rejects.toThrow(/not open for bookings/);

    // Reopening gives the day its room back and moves nothing.
    const reopened = await changeWorkingDay(db, { intent: "reopen_day", date: D }, dispatcher);
    expect(reopened.moved).toEqual([]);
    expect(reopened.room.capacity).toBeGreaterThan(0);
    expect(await db("audit_log").where({ action: "service_day.reopen" }).count("* as n").first()).toEqual({ n: 1 });
  });

  it("takes the visits off the day's draft runs and removes the emptied runs", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    const a = await aBooking(4, D);
    const b = await aBooking(3, D);
    await planServiceDay(db, { date: D, actorUserId: dispatcher, keepLocked: true, travel });
    expect(await db("stops").count("* as n").first()).toEqual({ n: 2 });
    const result = await changeWorkingDay(db, { intent: "close_day", date: D, note: "Holiday" }, dispatcher);
    expect(result.moved.map((m) => m.visitId)).toEqual([a.visitId, b.visitId]);
    expect(result.draftRunsChanged).toBe(1);
    expect(await db("stops").count("* as n").first()).toEqual({ n: 0 });
    expect(await db("runs").where({ service_date: D }).count("* as n").first()).toEqual({ n: 0 });
  });

  it("refuses when a visit that would move is on a published run, naming it, and changes nothing", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    await aBooking(4, D, "Ann");
    await planServiceDay(db, { date: D, actorUserId: dispatcher, keepLocked: true, travel });
    const run = await db("runs").where({ service_date: D }).first("id");
    await publishRun(db, { runId: run!.id, actorUserId: dispatcher });
    const refused = await refusal(changeWorkingDay(db, { intent: "close_day", date: D, note: "Holiday" }, dispatcher));
    expect(refused.message).toMatch(/a visit that would have to move is on Crew A's published run: Ann's yard of Ann \(Crew A\)/);
    expect(refused.message).toMatch(/Re-plan the day with published runs included/);
    expect(await db("service_days").where({ service_date: D }).first("closed")).toEqual({ closed: false });
    expect(await db("visits").where({ service_date: D }).count("* as n").first()).toEqual({ n: 1 });
    expect(await db("audit_log").whereIn("action", ["service_day.close", "visit.reschedule"]).count("* as n").first()).toEqual({ n: 0 });
    expect(await db("email_log").where({ kind: "visit_rescheduled" }).count("* as n").first()).toEqual({ n: 0 });

    // Re-planning with published runs included makes the run a draft; then the day closes.
    await planServiceDay(db, { date: D, actorUserId: dispatcher, keepLocked: true, replanPublished: true, travel });
    expect((await changeWorkingDay(db, { intent: "close_day", date: D, note: "Holiday" }, dispatcher)).moved).toHaveLength(1);
  });

  it("refuses a past day and a day closed already", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    expect((await refusal(changeWorkingDay(db, { intent: "close_day", date: addCalendarDays(today, -1), note: "Too late" }, dispatcher))).field).toBe("date");
    await changeWorkingDay(db, { intent: "close_day", date: D, note: "Holiday" }, dispatcher);
    expect((await refusal(changeWorkingDay(db, { intent: "close_day", date: D, note: "Holiday" }, dispatcher))).message).toBe("That day is closed already.");
  });
});

describe("course spacing", () => {
  /** A course of three rounds 7 days apart for a yard: rounds as given (date, status). */
  async function aCourse(rounds: { round: number; date: string; status: "done" | "scheduled" }[], colonies = 4) {
    const c = await aCustomer(colonies);
    const [booking] = await db("bookings").insert({ customer_id: c.customerId, yard_id: c.yardId, service_date: rounds[0].date, colonies }).returning("id");
    const [course] = await db("courses").insert({ yard_id: c.yardId, booking_id: booking.id, brood_status: "brood", rounds_planned: 3, interval_days: 7 }).returning("id");
    const ids: number[] = [];
    for (const r of rounds) {
      const [visit] = await db("visits")
        .insert({ course_id: course.id, yard_id: c.yardId, round_number: r.round, service_date: r.date, status: r.status, colonies_expected: colonies })
        .returning("id");
      ids.push(Number(visit.id));
    }
    return ids;
  }

  it("moves a later round no closer than the spacing after the round before it", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    // Round 1 was done two days before D (the round had slipped); round 2 must wait 7 days after it.
    const [, second] = await aCourse([
      { round: 1, date: addCalendarDays(D, -2), status: "done" },
      { round: 2, date: D, status: "scheduled" },
    ]);
    const result = await changeWorkingDay(db, { intent: "close_day", date: D, note: "Holiday" }, dispatcher);
    expect(result.moved).toEqual([expect.objectContaining({ visitId: second, toDate: addCalendarDays(D, 5) })]);
  });

  it("moves the later rounds of the course by as many days, with room for them too, and one e-mail", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    // Round 2 already booked a week after round 1; its day a week after D + 1 has no room.
    await capacityOf(addCalendarDays(D, 8), 0);
    const [first, second] = await aCourse([
      { round: 1, date: D, status: "scheduled" },
      { round: 2, date: addCalendarDays(D, 7), status: "scheduled" },
    ]);
    const result = await changeWorkingDay(db, { intent: "close_day", date: D, note: "Holiday" }, dispatcher);
    // D + 1 would put round 2 on the full D + 8: both go two days on, 7 days apart still.
    expect(result.moved.map((m) => [m.visitId, m.fromDate, m.toDate])).toEqual([
      [first, D, addCalendarDays(D, 2)],
      [second, addCalendarDays(D, 7), addCalendarDays(D, 9)],
    ]);
    expect(await dateOf(second)).toBe(addCalendarDays(D, 9));
    expect(await db("audit_log").where({ action: "visit.reschedule" }).orderBy("id").pluck("entity_id")).toEqual([String(first), String(second)]);
    const emails = await db("email_log").where({ kind: "visit_rescheduled" }).select("visit_id", "text_body");
    expect(emails.map((e) => Number(e.visit_id))).toEqual([first]);
    expect(emails[0].text_body).toMatch(/next treatment round moves with it/);
    await expectNoDayOverfilled();
  });

  it("refuses when no day has room, naming the visit, and writes nothing", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    const [huge] = await aCourse([{ round: 1, date: D, status: "scheduled" }], 5000);
    const refused = await refusal(changeWorkingDay(db, { intent: "close_day", date: D, note: "Holiday" }, dispatcher));
    expect(refused.message).toMatch(/^Nothing was changed: no day from .+ to .+ has room for .+ \(5000 colonies\)/);
    // Nothing written: the visit stays, the day is not closed (its row was never even kept).
    expect(await dateOf(huge)).toBe(D);
    expect((await db("service_days").where({ service_date: D }).first("closed"))?.closed ?? false).toBe(false);
    expect(await db("audit_log").count("* as n").first()).toEqual({ n: 0 });
  });

  it("refuses when a later round that would move is on a published run", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    await aCourse([
      { round: 1, date: D, status: "scheduled" },
      { round: 2, date: addCalendarDays(D, 7), status: "scheduled" },
    ]);
    await planServiceDay(db, { date: addCalendarDays(D, 7), actorUserId: dispatcher, keepLocked: true, travel });
    await publishRun(db, { runId: (await db("runs").first("id"))!.id, actorUserId: dispatcher });
    const refused = await refusal(changeWorkingDay(db, { intent: "close_day", date: D, note: "Holiday" }, dispatcher));
    expect(refused.message).toMatch(/would move a later round of its course, which is on Crew A's published run of/);
  });
});

describe("cutting a day's room", () => {
  it("moves the visits booked last that no longer fit, off their draft run, and keeps the others", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    const five = await aBooking(5, D);
    const six = await aBooking(6, D);
    const seven = await aBooking(7, D);
    await planServiceDay(db, { date: D, actorUserId: dispatcher, keepLocked: true, travel });
    const runBefore = await db("runs").where({ service_date: D }).first("id", "version");

    const result = await changeWorkingDay(db, { intent: "set_capacity", date: D, capacity: 12, note: null }, dispatcher);
    // 5 + 6 = 11 fit 12; 7 does not.
    expect(result.moved.map((m) => [m.visitId, m.toDate])).toEqual([[seven.visitId, addCalendarDays(D, 1)]]);
    expect(await dateOf(five.visitId)).toBe(D);
    expect(await dateOf(six.visitId)).toBe(D);
    expect(await db("stops").where({ visit_id: seven.visitId }).first()).toBeUndefined();
    expect(await db("runs").where({ id: runBefore!.id }).first("version", "status")).toEqual({ version: runBefore!.version + 1, status: "draft" });
    expect(result.room).toMatchObject({ capacity: 12, booked: 11 });
    const audit = await db("audit_log").where({ action: "service_day.capacity" }).first();
    expect(describeAuditEntry({ action: "service_day.capacity", entityType: "service_day", entityId: D, before: audit!.before, after: audit!.after })).toMatch(
      /^Set the capacity of .+ to 12 colonies, moving 1 visit to other days$/,
    );
    // Raising it again moves nothing back.
    expect((await changeWorkingDay(db, { intent: "set_capacity", date: D, capacity: null, note: null }, dispatcher)).moved).toEqual([]);
  });

  it("keeps visits on published runs and refuses a cut below what they hold, naming them", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    await aBooking(6, D, "Ann");
    await planServiceDay(db, { date: D, actorUserId: dispatcher, keepLocked: true, travel });
    const run = await db("runs").where({ service_date: D }).first("id");
    await publishRun(db, { runId: run!.id, actorUserId: dispatcher });
    const late = await aBooking(5, D, "Bo"); // booked after publishing: not on the run

    // A cut to 6 keeps the published visit and moves the later one.
    const result = await changeWorkingDay(db, { intent: "set_capacity", date: D, capacity: 6, note: null }, dispatcher);
    expect(result.moved.map((m) => m.visitId)).toEqual([late.visitId]);
    // Below 6, the published run alone does not fit: refused at the capacity field.
    const refused = await refusal(changeWorkingDay(db, { intent: "set_capacity", date: D, capacity: 4, note: null }, dispatcher));
    expect(refused.field).toBe("capacity");
    expect(refused.message).toMatch(/visits on published runs or under way hold 6 colonies \(Ann's yard of Ann \(Crew A\)\)/);
    expect(await db("service_days").where({ service_date: D }).first("capacity_colonies")).toEqual({ capacity_colonies: 6 });
  });
});

describe("closing a crew's day", () => {
  it("takes that crew's room off the day, moves what no longer fits and removes the crew's draft run", async () => {
    const dispatcher = await aUser("dispatcher");
    const crewA = await aCrew("Crew A", 10);
    await aCrew("Crew B", 8);
    const six = await aBooking(6, D);
    const five = await aBooking(5, D);
    const four = await aBooking(4, D);
    expect((await roomBetween(db, settings, D, D))[0].capacity).toBe(18);
    await planServiceDay(db, { date: D, actorUserId: dispatcher, keepLocked: true, travel });
    expect(await db("runs").where({ service_date: D, crew_id: crewA }).count("* as n").first()).toEqual({ n: 1 });

    const result = await changeWorkingDay(db, { intent: "close_crew_day", date: D, crewId: crewA, note: "Tobiah at the dentist" }, dispatcher);
    // Crew B's 8 colonies are left: 6 stays; 5 and 4 move to D + 1.
    expect(result.room.capacity).toBe(8);
    expect(result.moved.map((m) => [m.visitId, m.toDate])).toEqual([
      [five.visitId, addCalendarDays(D, 1)],
      [four.visitId, addCalendarDays(D, 1)],
    ]);
    expect(await dateOf(six.visitId)).toBe(D);
    expect(await db("runs").where({ service_date: D, crew_id: crewA }).count("* as n").first()).toEqual({ n: 0 });
    expect(await db("crew_days").where({ crew_id: crewA, service_date: D }).first("closed", "note")).toEqual({ closed: true, note: "Tobiah at the dentist" });
    // The crew's note stays inside the business: the customer reads a plain reason.
    const email = await db("email_log").where({ visit_id: five.visitId }).first("text_body");
    expect(email!.text_body).not.toMatch(/dentist/);
    const audit = await db("audit_log").where({ action: "crew_day.close" }).first();
    expect(describeAuditEntry({ action: "crew_day.close", entityType: "service_day", entityId: D, before: audit!.before, after: audit!.after })).toMatch(
      /^Closed Crew A's day on .+, moving 2 visits to other days: Tobiah at the dentist$/,
    );
    // The panel says so, and the planner leaves the crew out.
    const detail = await workingDayDetail(db, D);
    expect(detail.crews.map((c) => [c.name, c.state])).toEqual([
      ["Crew A", "closed"],
      ["Crew B", "working"],
    ]);
    const plan = await planServiceDay(db, { date: D, actorUserId: dispatcher, keepLocked: true, travel });
    expect(plan.crews.map((c) => c.crewName)).toEqual(["Crew B"]);

    // Reopened: the room comes back, nothing moves back.
    const reopened = await changeWorkingDay(db, { intent: "reopen_crew_day", date: D, crewId: crewA }, dispatcher);
    expect(reopened).toMatchObject({ moved: [], room: { capacity: 18 } });
    const reopenAudit = await db("audit_log").where({ action: "crew_day.reopen" }).first();
    expect(reopenAudit).toMatchObject({ actor_user_id: dispatcher, entity_type: "service_day", entity_id: D });
    expect(describeAuditEntry({ action: "crew_day.reopen", entityType: "service_day", entityId: D, before: reopenAudit!.before, after: reopenAudit!.after })).toMatch(/^Reopened Crew A's day on /);
  });

  it("refuses a crew whose run that day is published, or that does not work that day", async () => {
    const dispatcher = await aUser("dispatcher");
    const crewA = await aCrew("Crew A");
    await aBooking(4, D, "Ann");
    await planServiceDay(db, { date: D, actorUserId: dispatcher, keepLocked: true, travel });
    await publishRun(db, { runId: (await db("runs").first("id"))!.id, actorUserId: dispatcher });
    const refused = await refusal(changeWorkingDay(db, { intent: "close_crew_day", date: D, crewId: crewA, note: "Sick" }, dispatcher));
    expect(refused).toMatchObject({ field: "crewId", message: expect.stringMatching(/Crew A's run for that day is published \(Ann's yard of Ann\)/) });
    await db("crews").where({ id: crewA }).update({ working_weekdays: [] });
    expect((await refusal(changeWorkingDay(db, { intent: "close_crew_day", date: addCalendarDays(D, 1), crewId: crewA, note: "Sick" }, dispatcher))).message).toMatch(
      /does not work on .+days, so there is nothing to close/,
    );
  });
});

describe("the calendar's action", () => {
  async function cookieFor(userId: number): Promise<string> {
    const session = await sessionStorage().getSession();
    session.set("userId", String(userId));
    return (await sessionStorage().commitSession(session)).split(";")[0];
  }

  async function post(userId: number, fields: Record<string, string>) {
    const request = new Request("http://127.0.0.1/dispatch/calendar", {
      method: "POST",
      headers: { Cookie: await cookieFor(userId), "Content-Type": "application/x-www-form-urlencoded" },
      body: new URLSearchParams(fields).toString(),
    });
    const answer = (await calendarAction({ request, params: {}, context: {} } as never)) as unknown as { data: Record<string, unknown>; init: { status?: number } | null };
    return { status: answer.init?.status ?? 200, body: answer.data };
  }

  it("answers field messages for bad input, and the moves for a good one", async () => {
    const dispatcher = await aUser("dispatcher");
    const crewA = await aCrew("Crew A");
    const booked = await aBooking(4, D, "Ann");
    expect(await post(dispatcher, { intent: "close_day", date: D, note: "" })).toMatchObject({
      status: 400,
      body: { ok: false, intent: "close_day", errors: { note: "Say why the day is closed, e.g. “Holiday” or “Rain all day”." } },
    });
    expect(await post(dispatcher, { intent: "set_capacity", date: D, capacity: "-1" })).toMatchObject({ status: 400, body: { errors: { capacity: "The capacity cannot be below 0 colonies." } } });
    expect(await post(dispatcher, { intent: "close_crew_day", date: "2027-02-30", crewId: String(crewA), note: "Sick" })).toMatchObject({
      status: 400,
      body: { errors: { date: "Choose a day on the calendar (YYYY-MM-DD)." } },
    });
    expect(await post(dispatcher, { intent: "close_day", date: addCalendarDays(today, -3), note: "Holiday" })).toMatchObject({
      status: 409,
      body: { errors: { date: "That day is past; choose today or a later day." } },
    });
    expect(await db("service_days").where({ closed: true }).count("* as n").first()).toEqual({ n: 0 });

    const done = await post(dispatcher, { intent: "close_day", date: D, note: "Rain all day" });
    expect(done.status).toBe(200);
    expect(done.body).toMatchObject({ ok: true, moved: [{ visitId: booked.visitId, toDate: addCalendarDays(D, 1), yardName: "Ann's yard" }] });
    expect(done.body.message).toMatch(/^Closed .+\. 1 visit moved to the next days with room; the customers are being e-mailed\.$/);
  });
});

describe("closing a day while bookings arrive", () => {
  it("never overfills a day, and loses or doubles no visit", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A");
    for (let round = 0; round < 3; round++) {
      const day = addCalendarDays(D, round * 10);
      await capacityOf(day, 30);
      await capacityOf(addCalendarDays(day, 1), 14);
      await capacityOf(addCalendarDays(day, 2), 14);
      const before = [await aBooking(5, day), await aBooking(5, day), await aBooking(5, day)];
      const onDay = await Promise.all(Array.from({ length: 8 }, () => aCustomer(3)));
      const nextDay = await Promise.all(Array.from({ length: 6 }, () => aCustomer(4)));
      const bookingCalls = [
        ...onDay.map((c) => bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yardId], serviceDate: day, timePreference: "any", notes: null })),
        ...nextDay.map((c) => bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yardId], serviceDate: addCalendarDays(day, 1), timePreference: "any", notes: null })),
      ];
      const [closing, ...outcomes] = await Promise.allSettled([changeWorkingDay(db, { intent: "close_day", date: day, note: "Storm" }, dispatcher), ...bookingCalls]);
      expect(closing.status).toBe("fulfilled");
      for (const o of outcomes) if (o.status === "rejected") expect(o.reason).toBeInstanceOf(BookingRefused);
      const accepted = outcomes.filter((o) => o.status === "fulfilled").length;

      // The closed day holds nothing; no day holds more than it can take.
      expect((await roomBetween(db, settings, day, day))[0]).toMatchObject({ booked: 0, capacity: 0 });
      await expectNoDayOverfilled();
      // Every booking has its one visit, and every visit its booking: nothing lost or doubled.
      const customers = [...before.map((b) => b.customerId), ...onDay.map((c) => c.customerId), ...nextDay.map((c) => c.customerId)];
      const visits = await db("visits").join("yards", "yards.id", "visits.yard_id").whereIn("yards.customer_id", customers).select("visits.id", "visits.service_date", "visits.status");
      expect(visits).toHaveLength(before.length + accepted);
      expect(new Set(visits.map((v) => v.id)).size).toBe(visits.length);
      expect(visits.every((v) => v.status === "scheduled" && v.service_date !== day)).toBe(true);
      expect(await db("bookings").whereIn("customer_id", customers).count("* as n").first()).toEqual({ n: before.length + accepted });
      // Each visit moved off the closed day was moved once, with one e-mail.
      const moved = (closing as PromiseFulfilledResult<Awaited<ReturnType<typeof changeWorkingDay>>>).value.moved;
      expect(moved.length).toBeGreaterThanOrEqual(before.length);
      const emails = await db("email_log").where({ kind: "visit_rescheduled" }).whereIn("visit_id", moved.map((m) => m.visitId)).select("visit_id");
      expect(emails.map((e) => Number(e.visit_id)).sort()).toEqual(moved.map((m) => m.visitId).sort());
    }
  });
});
