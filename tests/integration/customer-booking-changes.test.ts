import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { changeDeadline } from "~/domain/booking-cutoff";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { bookingChangeView } from "~/models/booking-changes.server";
import { bookYards } from "~/models/bookings.server";
import { saveBusinessSettings } from "~/models/settings.server";
import { CUSTOMER_CANCEL_NOTE, rescheduleVisit, VisitChangeRefused } from "~/models/visit-changes.server";
import { loader as capacityLoader } from "~/routes/api/capacity";
import { action as changeAction, loader as changeLoader } from "~/routes/portal/booking-change";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { sessionStorage } from "~/services/session.server";
import { resetDatabase } from "./reset-database";

// A customer moves or cancels their own booked visit in the portal, before the cut-off in
// settings (48 hours before the day begins, by default). The day's room follows at once, the
// customer is the audit actor, and the customer and every active dispatcher and owner get an
// e-mail. Past the cut-off, on a published run, or for someone else's visit: refused.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const TZ = defaultBusinessSettings.timeZone;
const today = dateInZone(new Date(), TZ);

/** The first Tuesday at least `days` ahead: the test's days fall on weekdays, whichever days crews work. */
function tuesdayFrom(days: number): string {
  let date = addCalendarDays(today, days);
  while (new Date(`${date}T12:00:00Z`).getUTCDay() !== 2) date = addCalendarDays(date, 1);
  return date;
}

const day = tuesdayFrom(10); // round 1
const thursday = addCalendarDays(day, 2);
const wednesday = addCalendarDays(day, 1);

type Person = { userId: number; customerId: number; yardId: number; email: string };

let seq = 0;
async function aUser(role: "customer" | "dispatcher" | "owner" | "office", options: { disabled?: boolean } = {}) {
  seq++;
  const email = `${role}${seq}.${Math.random().toString(36).slice(2, 8)}@example.test`;
  const [user] = await db("users")
    .insert({ email, password_hash: "x", role, name: `${role} ${seq}`, disabled_at: options.disabled ? new Date() : null })
    .returning("id");
  return { id: Number(user.id), email };
}

async function aCustomer(colonies = 6): Promise<Person> {
  const user = await aUser("customer");
  const [customer] = await db("customers").insert({ user_id: user.id, name: `Casey ${seq}`, email: user.email, phone: "607-555-0199" }).returning("id");
  const [yard] = await db("yards")
    .insert({ customer_id: customer.id, name: `Ridge ${seq}`, lat: 42.5, lng: -76.3, colony_count: colonies, brood_status: "brood", address: "9 Ridge Road" })
    .returning("id");
  return { userId: user.id, customerId: Number(customer.id), yardId: Number(yard.id), email: user.email };
}

/** Books the yard on `date` through the real booking path, and adds rounds 2 and 3 a week apart (as the demo's courses have). */
async function aCourse(person: Person, date: string, withLaterRounds = true): Promise<{ bookingId: number; courseId: number; visitIds: number[] }> {
  const booked = await bookYards(db, { customerId: person.customerId, userId: person.userId, yardIds: [person.yardId], serviceDate: date, timePreference: "any", notes: null });
  const first = await db("visits").where({ id: booked.visitIds[0] }).first();
  const visitIds = [booked.visitIds[0]];
  if (withLaterRounds) {
    for (const round of [2, 3]) {
      const [visit] = await db("visits")
        .insert({ course_id: first!.course_id, yard_id: person.yardId, round_number: round, service_date: addCalendarDays(date, 7 * (round - 1)), colonies_expected: first!.colonies_expected })
        .returning("id");
      visitIds.push(Number(visit.id));
    }
  }
  return { bookingId: booked.bookingIds[0], courseId: first!.course_id, visitIds };
}

async function cookieFor(userId: number): Promise<string> {
  const session = await sessionStorage().getSession();
  session.set("userId", String(userId));
  return (await sessionStorage().commitSession(session)).split(";")[0];
}

type Answer = { status: number; body: unknown; location: string | null };

/** Calls a route function as the router would, and returns what it answered or threw. */
async function call(fn: (args: never) => unknown, url: string, userId: number, params: Record<string, string>, form?: Record<string, string>): Promise<Answer> {
  const headers = new Headers({ Cookie: await cookieFor(userId) });
  let init: RequestInit = { headers };
  if (form) {
    headers.set("Content-Type", "application/x-www-form-urlencoded");
    init = { method: "POST", headers, body: new URLSearchParams(form).toString() };
  }
  let outcome: unknown;
  try {
    outcome = await fn({ request: new Request(`http://127.0.0.1${url}`, init), params, context: {} } as never);
  } catch (thrown) {
    outcome = thrown;
  }
  if (outcome instanceof Response) {
    const json = outcome.headers.get("Content-Type")?.includes("json") ? await outcome.json() : null;
    return { status: outcome.status, body: json, location: outcome.headers.get("Location") };
  }
  const answer = outcome as { type?: string; data?: unknown; init?: { status?: number } | null };
  if (answer && answer.type === "DataWithResponseInit") return { status: answer.init?.status ?? 200, body: answer.data, location: null };
  return { status: 200, body: outcome, location: null };
}

const changeUrl = (visitId: number) => `/portal/bookings/${visitId}/change`;
const postChange = (person: Person, visitId: number, form: Record<string, string>) => call(changeAction, changeUrl(visitId), person.userId, { visitId: String(visitId) }, form);

/** Colonies that still fit on each day, as the booking calendar reads them from /api/capacity. */
async function roomSeenByCalendar(person: Person, from: string, to: string): Promise<Record<string, number>> {
  const answer = await call(capacityLoader, `/api/capacity?from=${from}&to=${to}`, person.userId, {});
  expect(answer.status).toBe(200);
  const days = (answer.body as { days: { date: string; remaining: number }[] }).days;
  return Object.fromEntries(days.map((d) => [d.date, d.remaining]));
}

async function datesOf(visitIds: number[]): Promise<string[]> {
  const rows = await db("visits").whereIn("id", visitIds).orderBy("round_number").select("service_date");
  return rows.map((r) => r.service_date);
}

let dispatcher: { id: number; email: string };
let owner: { id: number; email: string };
let retired: { id: number; email: string };
let office: { id: number; email: string };

beforeEach(async () => {
  await resetDatabase(db);
  await db("crews").insert({ name: "Crew A", start_label: "Shop", start_lat: 42.44, start_lng: -76.5, work_start: "08:00", work_end: "17:00", vaporizers: 2 });
  dispatcher = await aUser("dispatcher");
  owner = await aUser("owner");
  retired = await aUser("dispatcher", { disabled: true });
  office = await aUser("office");
  // A fixed room on the days the tests use, so the figures do not hang on the crews' estimate.
  for (const date of [day, wednesday, thursday, addCalendarDays(day, 7), addCalendarDays(thursday, 7), addCalendarDays(day, 14), addCalendarDays(thursday, 14)]) {
    await db("service_days").insert({ service_date: date, capacity_colonies: 20 });
  }
});

describe("a customer changes their own booked visit before the cut-off", () => {
  it("moves it (and the later rounds with it) to a day with room: the room moves at once, the customer is the audit actor, and both e-mails are queued", async () => {
    const casey = await aCustomer(6);
    const course = await aCourse(casey, day);
    const before = await roomSeenByCalendar(casey, day, addCalendarDays(thursday, 14));

    const page = await call(changeLoader, changeUrl(course.visitIds[0]), casey.userId, { visitId: String(course.visitIds[0]) });
    expect(page.status).toBe(200);
    expect(page.body).toMatchObject({ block: null, visit: { roundNumber: 1, roundsPlanned: 3, colonies: 6 }, laterRounds: [{ roundNumber: 2 }, { roundNumber: 3 }] });

    const answer = await postChange(casey, course.visitIds[0], { intent: "move", toDate: thursday });
    expect(answer).toMatchObject({ status: 302, location: `/portal/bookings?moved=${thursday}` });

    expect(await datesOf(course.visitIds)).toEqual([thursday, addCalendarDays(thursday, 7), addCalendarDays(thursday, 14)]);
    expect((await db("bookings").where({ id: course.bookingId }).first())?.service_date).toBe(thursday);
    const after = await roomSeenByCalendar(casey, day, addCalendarDays(thursday, 14));
    for (const week of [0, 7, 14]) {
      expect(after[addCalendarDays(day, week)], `room freed on ${addCalendarDays(day, week)}`).toBe(before[addCalendarDays(day, week)] + 6);
      expect(after[addCalendarDays(thursday, week)], `room taken on ${addCalendarDays(thursday, week)}`).toBe(before[addCalendarDays(thursday, week)] - 6);
    }

    const audit = await db("audit_log").where({ action: "visit.reschedule" }).orderBy("id");
    expect(audit.map((a) => [a.actor_user_id, a.entity_id])).toEqual(course.visitIds.map((id) => [casey.userId, String(id)]));
    expect(audit[0]).toMatchObject({ before: { serviceDate: day }, after: { serviceDate: thursday, byCustomer: true } });

    const mails = await db("email_log").whereNot({ kind: "booking_confirmation" }).orderBy("id").select("kind", "to_address", "subject", "text_body");
    expect(mails.filter((m) => m.kind === "visit_rescheduled").map((m) => m.to_address)).toEqual([casey.email]);
    expect(mails.filter((m) => m.kind === "customer_visit_change").map((m) => m.to_address).sort()).toEqual([dispatcher.email, owner.email].sort());
    expect(mails.map((m) => m.to_address)).not.toContain(retired.email);
    expect(mails.map((m) => m.to_address)).not.toContain(office.email);
    const toCustomer = mails.find((m) => m.kind === "visit_rescheduled")!;
    expect(toCustomer.text_body).toMatch(/As you asked, the treatment visit \(round 1\)/);
    expect(toCustomer.text_body).toMatch(/Round 2: .* → /);
    const toDispatch = mails.find((m) => m.to_address === dispatcher.email)!;
    expect(toDispatch.subject).toMatch(/moved a visit/);
    expect(toDispatch.text_body).toContain("607-555-0199");
    expect(toDispatch.text_body).toContain(`/dispatch/visits/${course.visitIds[0]}`);
  });

  it("cancels it with the rest of its course: the room is freed at once, the customer is the audit actor, and both e-mails are queued", async () => {
    const casey = await aCustomer(6);
    const course = await aCourse(casey, day);
    const before = await roomSeenByCalendar(casey, day, addCalendarDays(day, 14));

    const page = await call(changeLoader, changeUrl(course.visitIds[0]), casey.userId, { visitId: String(course.visitIds[0]) });
    expect((page.body as { laterRounds: unknown[] }).laterRounds).toHaveLength(2);

    const answer = await postChange(casey, course.visitIds[0], { intent: "cancel", reason: "  The hives went to a neighbour. " });
    expect(answer).toMatchObject({ status: 302, location: `/portal/bookings?cancelled=${day}` });

    const visits = await db("visits").whereIn("id", course.visitIds).orderBy("round_number");
    expect(visits.map((v) => v.status)).toEqual(["cancelled", "cancelled", "cancelled"]);
    expect(visits[0].notes).toBe("The hives went to a neighbour.");
    expect((await db("courses").where({ id: course.courseId }).first())?.status).toBe("cancelled");
    expect(await db("bookings").where({ id: course.bookingId }).first()).toMatchObject({ status: "cancelled", cancel_reason: "The hives went to a neighbour." });
    const after = await roomSeenByCalendar(casey, day, addCalendarDays(day, 14));
    for (const week of [0, 7, 14]) expect(after[addCalendarDays(day, week)]).toBe(before[addCalendarDays(day, week)] + 6);

    const audit = await db("audit_log").where({ action: "visit.cancel" }).orderBy("id");
    expect(audit.map((a) => [a.actor_user_id, a.entity_id])).toEqual(course.visitIds.map((id) => [casey.userId, String(id)]));
    expect(audit[0].after).toMatchObject({ status: "cancelled", reason: "The hives went to a neighbour.", byCustomer: true });

    const mails = await db("email_log").whereNot({ kind: "booking_confirmation" }).select("kind", "to_address", "subject", "text_body");
    expect(mails.filter((m) => m.kind === "booking_cancelled").map((m) => m.to_address)).toEqual([casey.email]);
    expect(mails.filter((m) => m.kind === "customer_visit_change").map((m) => m.to_address).sort()).toEqual([dispatcher.email, owner.email].sort());
    expect(mails.find((m) => m.to_address === owner.email)!.text_body).toContain("The hives went to a neighbour.");
    expect(mails.find((m) => m.kind === "booking_cancelled")!.text_body).toMatch(/These later rounds of the course are cancelled too/);
  });

  it("moves a course by its own interval onto days its later rounds leave, even when those days are nearly full", async () => {
    const casey = await aCustomer(6);
    const course = await aCourse(casey, day);
    const [week1, week2, week3] = [7, 14, 21].map((d) => addCalendarDays(day, d));
    // Rounds 2 and 3 fill these days but for 2 colonies: round 1 fits only because round 2 leaves, and so on.
    await db("service_days").whereIn("service_date", [week1, week2]).update({ capacity_colonies: 8 });
    await db("service_days").insert({ service_date: week3, capacity_colonies: 8 });
    expect(await postChange(casey, course.visitIds[0], { intent: "move", toDate: week1 })).toMatchObject({ status: 302 });
    expect(await datesOf(course.visitIds)).toEqual([week1, week2, week3]);
    const room = await roomSeenByCalendar(casey, day, week3);
    expect([room[day], room[week1], room[week2], room[week3]]).toEqual([20, 2, 2, 2]);
  });

  it("cancels without a reason, noting that the customer did it", async () => {
    const casey = await aCustomer(4);
    const course = await aCourse(casey, day, false);
    expect(await postChange(casey, course.visitIds[0], { intent: "cancel", reason: "" })).toMatchObject({ status: 302 });
    expect(await db("visits").where({ id: course.visitIds[0] }).first()).toMatchObject({ status: "cancelled", notes: CUSTOMER_CANCEL_NOTE });
    expect((await db("audit_log").where({ action: "visit.cancel" }).first())?.after).toMatchObject({ reason: null });
  });
});

describe("a customer's change is refused", () => {
  it("after the cut-off, with a message that says whom to call", async () => {
    await saveBusinessSettings(db, { ...defaultBusinessSettings, businessName: "North Slope Hive Care", businessPhone: "607-555-0100", contactEmail: "office@north-slope.example" }, owner.id);
    const casey = await aCustomer(6);
    const tomorrow = addCalendarDays(today, 1);
    await db("service_days").insert({ service_date: tomorrow, capacity_colonies: 20 }).onConflict("service_date").merge();
    const soon = await aCourse(casey, tomorrow, false);

    const page = await call(changeLoader, changeUrl(soon.visitIds[0]), casey.userId, { visitId: String(soon.visitIds[0]) });
    expect(page.status).toBe(200);
    expect(page.body).toMatchObject({ block: "cutoff" });
    expect((page.body as { blockMessage: string }).blockMessage).toMatch(/until 48 hours before their day begins.*call North Slope Hive Care on 607-555-0100 or e-mail office@north-slope\.example/);

    for (const form of [{ intent: "move", toDate: thursday }, { intent: "cancel", reason: "" }] as Record<string, string>[]) {
      const answer = await postChange(casey, soon.visitIds[0], form);
      expect(answer.status).toBe(409);
      expect((answer.body as { errors: Record<string, string> }).errors.form).toMatch(/48 hours.*607-555-0100.*office@north-slope\.example/);
    }
    expect(await db("visits").where({ id: soon.visitIds[0] }).first()).toMatchObject({ service_date: tomorrow, status: "scheduled" });
    expect(await db("audit_log").whereIn("action", ["visit.reschedule", "visit.cancel"])).toHaveLength(0);
    expect(await db("email_log").whereNot({ kind: "booking_confirmation" })).toHaveLength(0);
  });

  it("from the instant of the cut-off, not a moment before", async () => {
    const casey = await aCustomer(6);
    const course = await aCourse(casey, day, false);
    const deadline = changeDeadline(day, defaultBusinessSettings.customerChangeCutoffHours, TZ);
    const refusal = await rescheduleVisit(db, { visitId: course.visitIds[0], toDate: thursday, reason: null, actorUserId: casey.userId, byCustomerId: casey.customerId }, deadline).catch((e) => e);
    expect(refusal).toBeInstanceOf(VisitChangeRefused);
    expect(refusal).toMatchObject({ field: "form", message: expect.stringMatching(/48 hours/) });
    expect(await datesOf(course.visitIds)).toEqual([day]);
    await rescheduleVisit(db, { visitId: course.visitIds[0], toDate: thursday, reason: null, actorUserId: casey.userId, byCustomerId: casey.customerId }, new Date(deadline.getTime() - 60_000));
    expect(await datesOf(course.visitIds)).toEqual([thursday]);
  });

  it("for another customer's visit: the page and the form answer 404, and the model refuses", async () => {
    const casey = await aCustomer(6);
    const robin = await aCustomer(3);
    const course = await aCourse(casey, day, false);
    expect((await call(changeLoader, changeUrl(course.visitIds[0]), robin.userId, { visitId: String(course.visitIds[0]) })).status).toBe(404);
    expect((await postChange(robin, course.visitIds[0], { intent: "cancel", reason: "" })).status).toBe(404);
    expect((await postChange(robin, course.visitIds[0], { intent: "move", toDate: thursday })).status).toBe(404);
    const refusal = await rescheduleVisit(db, { visitId: course.visitIds[0], toDate: thursday, reason: null, actorUserId: robin.userId, byCustomerId: robin.customerId }).catch((e) => e);
    expect(refusal).toBeInstanceOf(VisitChangeRefused);
    expect(refusal.message).toMatch(/no visit with that number in your account/);
    expect(await db("visits").where({ id: course.visitIds[0] }).first()).toMatchObject({ service_date: day, status: "scheduled" });
    expect(await db("email_log").whereNot({ kind: "booking_confirmation" })).toHaveLength(0);
  });

  it("for a visit on a published run; a draft run does not stop a change and loses the stop", async () => {
    const casey = await aCustomer(6);
    const course = await aCourse(casey, day, false);
    const [crew] = await db("crews").select("id");
    const at = new Date(`${day}T14:00:00Z`);
    const [run] = await db("runs").insert({ crew_id: crew.id, service_date: day, status: "published", published_at: new Date() }).returning("id");
    await db("stops").insert({ run_id: run.id, visit_id: course.visitIds[0], position: 0, arrive_at: at, start_at: at, leave_at: at });

    const page = await call(changeLoader, changeUrl(course.visitIds[0]), casey.userId, { visitId: String(course.visitIds[0]) });
    expect(page.body).toMatchObject({ block: "published" });
    const answer = await postChange(casey, course.visitIds[0], { intent: "move", toDate: thursday });
    expect(answer.status).toBe(409);
    expect((answer.body as { errors: Record<string, string> }).errors.form).toMatch(/on the crew's run/);
    expect(await db("stops").where({ visit_id: course.visitIds[0] })).toHaveLength(1);
    expect((await db("visits").where({ id: course.visitIds[0] }).first())?.service_date).toBe(day);

    await db("runs").where({ id: run.id }).update({ status: "draft", published_at: null });
    expect(await postChange(casey, course.visitIds[0], { intent: "move", toDate: thursday })).toMatchObject({ status: 302 });
    expect(await db("stops").where({ visit_id: course.visitIds[0] })).toHaveLength(0);
  });

  it("for a full day, at the date field, keeping the day asked for and changing nothing", async () => {
    const casey = await aCustomer(6);
    const course = await aCourse(casey, day, false);
    await db("service_days").where({ service_date: wednesday }).update({ capacity_colonies: 4 });
    const answer = await postChange(casey, course.visitIds[0], { intent: "move", toDate: wednesday });
    expect(answer.status).toBe(409);
    const body = answer.body as { errors: Record<string, string>; values: Record<string, string> };
    expect(Object.keys(body.errors)).toEqual(["toDate"]);
    expect(body.errors.toDate).toMatch(/room for 4 more colonies; this visit has 6/);
    expect(body.values.toDate).toBe(wednesday);
    expect((await db("visits").where({ id: course.visitIds[0] }).first())?.service_date).toBe(day);
    expect(await db("audit_log").where({ action: "visit.reschedule" })).toHaveLength(0);
    expect(await db("email_log").whereNot({ kind: "booking_confirmation" })).toHaveLength(0);
  });

  it("for a later round moved outside the course's spacing, at the date field", async () => {
    const casey = await aCustomer(6);
    const course = await aCourse(casey, day);
    // Round 2 is a week after round 1; three weeks would break the course.
    const answer = await postChange(casey, course.visitIds[1], { intent: "move", toDate: addCalendarDays(day, 21) });
    expect(answer.status).toBe(409);
    expect((answer.body as { errors: Record<string, string> }).errors.toDate).toMatch(/round 2 stays about 7 days after round 1/);
    // Two days later is within the spacing: round 3 follows by two days.
    expect(await postChange(casey, course.visitIds[1], { intent: "move", toDate: addCalendarDays(thursday, 7) })).toMatchObject({ status: 302 });
    expect(await datesOf(course.visitIds)).toEqual([day, addCalendarDays(thursday, 7), addCalendarDays(thursday, 14)]);
  });

  it("through the page's view for anyone but the owner of the visit", async () => {
    const casey = await aCustomer(6);
    const robin = await aCustomer(3);
    const course = await aCourse(casey, day, false);
    expect(await bookingChangeView(db, { customerId: robin.customerId, visitId: course.visitIds[0] })).toBeNull();
    expect(await bookingChangeView(db, { customerId: casey.customerId, visitId: course.visitIds[0] })).not.toBeNull();
  });
});
