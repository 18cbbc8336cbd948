import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { describeAuditEntry } from "~/domain/audit-descriptions";
import { isoWeekdayOf } from "~/domain/capacity";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { crewSchema } from "~/forms/crew";
import { bookYards, BookingRefused } from "~/models/bookings.server";
import { crewIdsWorkingOn, roomBetween } from "~/models/capacity.server";
import { createCrew, CrewRefused, listCrews, overbookedDaysAhead, updateCrew } from "~/models/crews.server";
import { DayPlanRefused, moveStop, planServiceDay } from "~/models/day-plan.server";
import { action as editAction, loader as editLoader } from "~/routes/dispatch/crew-edit";
import { action as newAction } from "~/routes/dispatch/crew-new";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { sessionStorage } from "~/services/session.server";
import { resetDatabase } from "./reset-database";

// Crews: the form's rules with their messages, the one-active-crew rule for members, the
// audit entries, and that the booking capacity and the day planner both follow each crew's
// weekdays, closures and daily limits.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

const settings = defaultBusinessSettings;
const today = dateInZone(new Date(), settings.timeZone);
const travel = { osrmUrl: null }; // the built-in estimate, whatever the environment says

/** The first date on or after `from` with this ISO weekday. */
function nextWeekday(from: string, weekday: number): string {
  let date = from;
  while (isoWeekdayOf(date) !== weekday) date = addCalendarDays(date, 1);
  return date;
}
const monday = nextWeekday(addCalendarDays(today, 14), 1);

let seq = 0;
async function aUser(role: "crew" | "dispatcher" | "customer" | "office", name = `${role} ${seq}`) {
  seq++;
  const [user] = await db("users")
    .insert({ email: `${role}${seq}.${Math.random().toString(36).slice(2, 8)}@example.test`, password_hash: "x", role, name })
    .returning("id");
  return Number(user.id);
}

type CrewRowInput = { name: string; weekdays?: number[]; maxColonies?: number | null; maxGrams?: number | null; active?: boolean; lat?: number; lng?: number; end?: string };
async function aCrewRow(input: CrewRowInput): Promise<number> {
  const [crew] = await db("crews")
    .insert({
      name: input.name,
      start_label: `${input.name} shop`,
      start_lat: input.lat ?? 42.44,
      start_lng: input.lng ?? -76.5,
      work_start: "08:00",
      work_end: input.end ?? "17:00",
      vaporizers: 2,
      working_weekdays: input.weekdays ?? [1, 2, 3, 4, 5, 6, 7],
      max_colonies_per_day: input.maxColonies ?? null,
      max_dose_grams_per_day: input.maxGrams ?? null,
      active: input.active ?? true,
    })
    .returning("id");
  return Number(crew.id);
}

async function aCustomerYard(colonies: number, place = { lat: 42.45, lng: -76.48 }, boxes = 1) {
  const userId = await aUser("customer");
  const [customer] = await db("customers").insert({ user_id: userId, name: `Keeper ${seq}`, email: `keeper${seq}.${Math.random().toString(36).slice(2, 6)}@example.test` }).returning("id");
  const [yard] = await db("yards")
    .insert({ customer_id: customer.id, name: `Yard ${seq}`, lat: place.lat, lng: place.lng, colony_count: colonies, brood_boxes_per_colony: boxes, brood_status: "broodless" })
    .returning("id");
  return { userId, customerId: Number(customer.id), yardId: Number(yard.id) };
}

async function book(colonies: number, date: string, place?: { lat: number; lng: number }, boxes = 1) {
  const c = await aCustomerYard(colonies, place, boxes);
  return bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yardId], serviceDate: date, timePreference: "any", notes: null });
}

// ---------------------------------------------------------------------------------------
// Calling the pages' actions as the router does

async function cookieFor(userId: number): Promise<string> {
  const session = await sessionStorage().getSession();
  session.set("userId", String(userId));
  return (await sessionStorage().commitSession(session)).split(";")[0];
}

type Answer = { status: number; body: { errors?: Record<string, string>; values?: unknown } | null; location: string | null };

async function callRoute(fn: (args: never) => unknown, url: string, userId: number, params: Record<string, string>, form?: [string, string][]): Promise<Answer> {
  const headers = new Headers({ Cookie: await cookieFor(userId) });
  let init: RequestInit = { method: "GET", headers };
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
  if (outcome instanceof Response) return { status: outcome.status, body: null, location: outcome.headers.get("Location") };
  const answer = outcome as { data?: unknown; init?: { status?: number } | null; type?: string };
  if (answer && typeof answer === "object" && "init" in answer) return { status: answer.init?.status ?? 200, body: answer.data as Answer["body"], location: null };
  return { status: 200, body: outcome as Answer["body"], location: null };
}

/** A valid crew form, as the browser sends it (repeated checkboxes as repeated fields). */
function crewForm(overrides: Record<string, string | string[] | null> = {}): [string, string][] {
  const base: Record<string, string | string[] | null> = {
    name: "Crew North",
    memberIds: [],
    startLabel: "Shop, 12 Kiln Lane",
    startLat: "42.428",
    startLng: "-76.478",
    endLabel: "",
    endLat: "",
    endLng: "",
    workStart: "07:30",
    workEnd: "16:30",
    vaporizers: "3",
    maxColoniesPerDay: "40",
    maxDoseGramsPerDay: "55.5",
    workingWeekdays: ["1", "2", "3", "4", "5"],
    active: "on",
    ...overrides,
  };
  const out: [string, string][] = [];
  for (const [key, value] of Object.entries(base)) {
    if (value === null) continue;
    for (const v of Array.isArray(value) ? value : [value]) out.push([key, v]);
  }
  return out;
}

function crewInput(overrides: Record<string, string | string[] | null> = {}) {
  const fields: Record<string, string | string[]> = {};
  for (const [k, v] of crewForm(overrides)) {
    const prev = fields[k];
    fields[k] = prev === undefined ? v : Array.isArray(prev) ? [...prev, v] : [prev, v];
  }
  // Lists with one entry as the browser would send them: one field.
  return crewSchema.parse({ ...fields, memberIds: overrides.memberIds ?? [], workingWeekdays: overrides.workingWeekdays ?? ["1", "2", "3", "4", "5"] });
}

// ---------------------------------------------------------------------------------------

describe("adding and editing a crew", () => {
  it("refuses a bad form with a message at each field, and writes nothing", async () => {
    const dispatcher = await aUser("dispatcher");
    const answer = await callRoute(newAction, "/dispatch/crews/new", dispatcher, {}, crewForm({
      name: "  ",
      startLat: "north",
      startLng: "-200",
      endLat: "42.5",
      workStart: "17:00",
      workEnd: "08:00",
      vaporizers: "0",
      maxColoniesPerDay: "0",
      maxDoseGramsPerDay: "1.234",
      workingWeekdays: [],
    }));
    expect(answer.status).toBe(400);
    expect(answer.body?.errors).toEqual({
      name: "Give the crew a name, e.g. “Crew 3”.",
      startLat: "Enter the start latitude as a number.",
      startLng: "Longitude is between −180 and 180.",
      vaporizers: "A crew carries at least 1 vaporizer.",
      maxColoniesPerDay: "The most colonies a day must be at least 1; leave it empty for no limit.",
      maxDoseGramsPerDay: "Enter grams to two decimals at most.",
      workingWeekdays: "Tick at least one weekday the crew works.",
    });
    // What was typed comes back for the form.
    expect(answer.body?.values).toMatchObject({ startLat: "north", maxDoseGramsPerDay: "1.234", workingWeekdays: [] });
    // Cross-field rules, once the fields themselves are right.
    const second = await callRoute(newAction, "/dispatch/crews/new", dispatcher, {}, crewForm({ workStart: "17:00", workEnd: "08:00", endLat: "42.5" }));
    expect(second.status).toBe(400);
    expect(second.body?.errors).toEqual({ workEnd: "The working day must end after it starts.", endLng: "Enter the end longitude too, or clear both." });
    expect(await db("crews").count("* as n").first()).toEqual({ n: 0 });
    expect(await db("audit_log").count("* as n").first()).toEqual({ n: 0 });
  });

  it("adds a crew with its members, weekdays and limits, audited as crew.create", async () => {
    const dispatcher = await aUser("dispatcher");
    const ann = await aUser("crew", "Ann Hive");
    const bo = await aUser("crew", "Bo Smoker");
    const answer = await callRoute(newAction, "/dispatch/crews/new", dispatcher, {}, crewForm({ memberIds: [String(bo), String(ann)], workingWeekdays: ["6", "1", "3"] }));
    expect(answer.status).toBe(302);
    const crew = await db("crews").where({ name: "Crew North" }).first();
    expect(answer.location).toBe(`/dispatch/crews?added=${crew!.id}`);
    expect(crew).toMatchObject({
      start_label: "Shop, 12 Kiln Lane",
      start_lat: 42.428,
      end_lat: null,
      work_start: "07:30:00",
      work_end: "16:30:00",
      vaporizers: 3,
      max_colonies_per_day: 40,
      max_dose_grams_per_day: 55.5,
      working_weekdays: [1, 3, 6],
      active: true,
    });
    expect((await db("crew_members").where({ crew_id: crew!.id }).orderBy("user_id").pluck("user_id")).map(Number)).toEqual([ann, bo].sort((a, b) => a - b));
    const audit = await db("audit_log").where({ action: "crew.create" }).first();
    expect(audit).toMatchObject({ actor_user_id: dispatcher, entity_type: "crew", entity_id: String(crew!.id) });
    expect(audit!.after).toMatchObject({ name: "Crew North", memberIds: [ann, bo].sort((a, b) => a - b), workingWeekdays: [1, 3, 6], maxColoniesPerDay: 40, maxDoseGramsPerDay: 55.5, active: true });
    expect(describeAuditEntry({ action: audit!.action, entityType: audit!.entity_type, entityId: audit!.entity_id, before: audit!.before, after: audit!.after })).toBe("Added the crew Crew North");

    const [listed] = await listCrews(db);
    expect(listed).toMatchObject({ name: "Crew North", weekdays: "Mon, Wed, Sat", maxColoniesPerDay: 40, members: [{ name: "Ann Hive" }, { name: "Bo Smoker" }] });
    // The figure the booking calendar counts: the estimate, capped at the crew's limits.
    // Estimate, 07:30–16:30 = 540 min, 3 vaporizers, default times: a typical yard of 5 colonies
    // is 2 cycles, 15 + 2 × 35/60 + 1 × 2 + 10 = 28.17 min, + 20 min drive = 48.17 min;
    // 540 − 20 (drive home) = 520, 520 / 48.17 = 10.8 → 10 yards = 50 colonies, 38.33 min left
    // (a 1-colony yard needs 15 + 35/60 + 10 + 20 = 45.58) → 50.
    // Limits: 40 colonies; 55.5 g over the least dose a colony can take (one nuc box, 0.5 g) = 111.
    // min(50, 40, 111) = 40.
    expect(listed.estimatedColoniesPerDay).toBe(40);
    expect(listed.limitColoniesPerDay).toBe(40);
  });

  it("edits a crew: the new values, the members replaced, and crew.update with before and after", async () => {
    const dispatcher = await aUser("dispatcher");
    const ann = await aUser("crew", "Ann Hive");
    const bo = await aUser("crew", "Bo Smoker");
    const crewId = await createCrew(db, crewInput({ memberIds: [String(ann)] }), dispatcher);
    const page = await callRoute(editLoader, `/dispatch/crews/${crewId}`, dispatcher, { crewId: String(crewId) });
    expect((page.body as unknown as { values: { maxDoseGramsPerDay: string; workingWeekdays: string[] } }).values).toMatchObject({ maxDoseGramsPerDay: "55.5", workingWeekdays: ["1", "2", "3", "4", "5"] });

    const answer = await callRoute(editAction, `/dispatch/crews/${crewId}`, dispatcher, { crewId: String(crewId) }, crewForm({
      memberIds: [String(bo)],
      maxColoniesPerDay: "",
      maxDoseGramsPerDay: "",
      workingWeekdays: ["1", "2", "3", "4", "5", "6"],
      endLabel: "Lock-up, Dryden",
      endLat: "42.486",
      endLng: "-76.301",
    }));
    expect(answer).toMatchObject({ status: 302, location: `/dispatch/crews?saved=${crewId}` });
    expect(await db("crews").where({ id: crewId }).first()).toMatchObject({ max_colonies_per_day: null, max_dose_grams_per_day: null, working_weekdays: [1, 2, 3, 4, 5, 6], end_label: "Lock-up, Dryden", end_lat: 42.486 });
    expect((await db("crew_members").where({ crew_id: crewId }).pluck("user_id")).map(Number)).toEqual([bo]);
    const audit = await db("audit_log").where({ action: "crew.update" }).first();
    expect(audit).toMatchObject({ actor_user_id: dispatcher, entity_id: String(crewId) });
    expect(audit!.before).toMatchObject({ memberIds: [ann], maxColoniesPerDay: 40, workingWeekdays: [1, 2, 3, 4, 5], end: null });
    expect(audit!.after).toMatchObject({ memberIds: [bo], maxColoniesPerDay: null, workingWeekdays: [1, 2, 3, 4, 5, 6], end: { lat: 42.486, lng: -76.301 } });
    expect(describeAuditEntry({ action: audit!.action, entityType: "crew", entityId: String(crewId), before: audit!.before, after: audit!.after })).toBe(
      "Changed the crew Crew North: members, end point, weekdays, most colonies a day, most grams a day",
    );

    // A bad edit is refused at its field and changes nothing; an unknown crew is a 404.
    const bad = await callRoute(editAction, `/dispatch/crews/${crewId}`, dispatcher, { crewId: String(crewId) }, crewForm({ vaporizers: "2.5" }));
    expect(bad).toMatchObject({ status: 400, body: { errors: { vaporizers: "Vaporizers are counted whole." } } });
    expect(await db("audit_log").where({ action: "crew.update" }).count("* as n").first()).toEqual({ n: 1 });
    expect((await callRoute(editLoader, "/dispatch/crews/999999", dispatcher, { crewId: "999999" })).status).toBe(404);
    expect((await callRoute(editAction, "/dispatch/crews/abc", dispatcher, { crewId: "abc" }, crewForm())).status).toBe(404);
  });

  it("refuses a name already taken, whatever its case, at the name field", async () => {
    const dispatcher = await aUser("dispatcher");
    await createCrew(db, crewInput(), dispatcher);
    const answer = await callRoute(newAction, "/dispatch/crews/new", dispatcher, {}, crewForm({ name: "crew north" }));
    expect(answer).toMatchObject({ status: 409, body: { errors: { name: "There is already a crew called “crew north”. Choose another name." } } });
  });

  it("is refused by the pages to anyone but dispatch", async () => {
    const office = await aUser("office");
    const answer = await callRoute(newAction, "/dispatch/crews/new", office, {}, crewForm());
    expect([403, 404]).toContain(answer.status);
    expect(await db("crews").count("* as n").first()).toEqual({ n: 0 });
  });
});

describe("a person is on one active crew at most", () => {
  it("refuses a member of another active crew, allows them on an inactive crew, and refuses activating it then", async () => {
    const dispatcher = await aUser("dispatcher");
    const ann = await aUser("crew", "Ann Hive");
    const office = await aUser("office", "Otto Office");
    await createCrew(db, crewInput({ name: "Crew A", memberIds: [String(ann)] }), dispatcher);

    const answer = await callRoute(newAction, "/dispatch/crews/new", dispatcher, {}, crewForm({ name: "Crew B", memberIds: [String(ann)] }));
    expect(answer.status).toBe(409);
    expect(answer.body?.errors?.memberIds).toMatch(/one active crew only: Ann Hive \(on Crew A\)/);

    const spare = await createCrew(db, crewInput({ name: "Crew B", memberIds: [String(ann)], active: null }), dispatcher);
    expect(await db("crews").where({ id: spare }).first("active")).toEqual({ active: false });
    await expect(updateCrew(db, spare, crewInput({ name: "Crew B", memberIds: [String(ann)] }), dispatcher)).rejects.toMatchObject({ field: "memberIds" });
    await expect(createCrew(db, crewInput({ name: "Crew C", memberIds: [String(office)] }), dispatcher)).rejects.toThrow(/does not have the crew role/);
  });

  it("lets only one of two crews saved at once take the same person", async () => {
    const dispatcher = await aUser("dispatcher");
    const ann = await aUser("crew", "Ann Hive");
    for (let round = 0; round < 5; round++) {
      await db("crew_members").delete();
      await db("crews").delete();
      const outcomes = await Promise.allSettled([
        createCrew(db, crewInput({ name: `East ${round}`, memberIds: [String(ann)] }), dispatcher),
        createCrew(db, crewInput({ name: `West ${round}`, memberIds: [String(ann)] }), dispatcher),
      ]);
      expect(outcomes.map((o) => o.status).sort()).toEqual(["fulfilled", "rejected"]);
      const refused = outcomes.find((o): o is PromiseRejectedResult => o.status === "rejected")!;
      expect(refused.reason).toBeInstanceOf(CrewRefused);
      const active = await db("crew_members").join("crews", "crews.id", "crew_members.crew_id").where("crews.active", true).where("crew_members.user_id", ann).count("* as n").first();
      expect(active).toEqual({ n: 1 });
    }
  });
});

describe("the booking capacity follows the crews", () => {
  it("counts only crews working that weekday, not closed that day, capped at their limits", async () => {
    const weekdaysOnly = await aCrewRow({ name: "Weekday crew", weekdays: [1, 2, 3, 4, 5], maxColonies: 12 });
    await aCrewRow({ name: "Saturday crew", weekdays: [6], maxGrams: 15.5 });
    await aCrewRow({ name: "Retired crew", active: false });
    const week = await roomBetween(db, settings, monday, addCalendarDays(monday, 6));
    // Mon–Fri: the weekday crew, capped at 12 colonies.
    expect(week.slice(0, 5).map((d) => d.capacity)).toEqual([12, 12, 12, 12, 12]);
    // Saturday: 15.5 g is at most 31 colonies (one nuc box each, 0.5 g), and exactly 15.5 g.
    expect(week[5]).toMatchObject({ capacity: 31, gramsCapacity: 15.5, crewsWorking: 1, closed: false });
    // Sunday: nobody works; the day takes nothing and counts as closed.
    expect(week[6]).toMatchObject({ capacity: 0, crewsWorking: 0, closed: true });

    // A crew's day closed: Tuesday loses that crew.
    await db("crew_days").insert({ crew_id: weekdaysOnly, service_date: addCalendarDays(monday, 1), closed: true, note: "Truck in the shop" });
    const [tuesday] = await roomBetween(db, settings, addCalendarDays(monday, 1), addCalendarDays(monday, 1));
    expect(tuesday).toMatchObject({ capacity: 0, crewsWorking: 0 });
    expect(await crewIdsWorkingOn(db, addCalendarDays(monday, 1))).toEqual([]);
    expect(await crewIdsWorkingOn(db, monday)).toEqual([weekdaysOnly]);
    // A reopened crew-day (closed = false) counts again.
    await db("crew_days").update({ closed: false });
    expect((await roomBetween(db, settings, addCalendarDays(monday, 1), addCalendarDays(monday, 1)))[0].capacity).toBe(12);
  });

  it("holds bookings to the same figures under the day's lock", async () => {
    await aCrewRow({ name: "Weekday crew", weekdays: [1, 2, 3, 4, 5], maxColonies: 12 });
    await book(8, monday);
    await expect(book(5, monday)).rejects.toThrow(/room for 4 more colonies/);
    await expect(book(2, addCalendarDays(monday, 6))).rejects.toBeInstanceOf(BookingRefused);
    await expect(book(2, addCalendarDays(monday, 6))).rejects.toThrow(/not open for bookings/);
    expect((await roomBetween(db, settings, monday, monday))[0]).toMatchObject({ capacity: 12, booked: 8, remaining: 4 });
  });

  it("lists the days ahead a crew change left with more booked than they can take", async () => {
    const dispatcher = await aUser("dispatcher");
    const crewId = await createCrew(db, crewInput({ maxColoniesPerDay: "", maxDoseGramsPerDay: "", workingWeekdays: ["1", "2", "3", "4", "5", "6", "7"] }), dispatcher);
    await book(10, monday);
    expect(await overbookedDaysAhead(db)).toEqual([]);
    await updateCrew(db, crewId, crewInput({ maxColoniesPerDay: "6", maxDoseGramsPerDay: "", workingWeekdays: ["1", "2", "3", "4", "5", "6", "7"] }), dispatcher);
    expect(await overbookedDaysAhead(db)).toEqual([{ date: monday, booked: 10, capacity: 6 }]);
  });
});

describe("the day planner uses the same crews and their limits", () => {
  it("plans only with the crews working that day", async () => {
    const dispatcher = await aUser("dispatcher");
    const weekday = await aCrewRow({ name: "Weekday crew", weekdays: [1, 2, 3, 4, 5] });
    const everyDay = await aCrewRow({ name: "Every-day crew", lat: 42.45, lng: -76.45 });
    await book(4, monday);
    await db("crew_days").insert({ crew_id: everyDay, service_date: monday, closed: true, note: "Holiday" });
    const summary = await planServiceDay(db, { date: monday, actorUserId: dispatcher, keepLocked: true, travel });
    expect(summary.crews.map((c) => c.crewId)).toEqual([weekday]);
    expect(summary.deferred).toEqual([]);
    const runs = await db("runs").where({ service_date: monday }).pluck("crew_id");
    expect(runs.map(Number)).toEqual([weekday]);

    // Saturday: only the every-day crew works.
    const saturday = addCalendarDays(monday, 5);
    await book(3, saturday);
    const weekend = await planServiceDay(db, { date: saturday, actorUserId: dispatcher, keepLocked: true, travel });
    expect(weekend.crews.map((c) => c.crewId)).toEqual([everyDay]);
  });

  it("never gives a crew more colonies than its limit; what does not fit is deferred", async () => {
    const dispatcher = await aUser("dispatcher");
    const limited = await aCrewRow({ name: "Limited crew", maxColonies: 10 });
    // Booked while the crew had no limit (the capacity would now stop at 10): the planner must
    // hold the limit by itself.
    await db("crews").where({ id: limited }).update({ max_colonies_per_day: null });
    const a = await book(6, monday, { lat: 42.45, lng: -76.48 });
    const b = await book(5, monday, { lat: 42.46, lng: -76.47 });
    const c = await book(4, monday, { lat: 42.44, lng: -76.49 });
    await db("crews").where({ id: limited }).update({ max_colonies_per_day: 10 });
    const summary = await planServiceDay(db, { date: monday, actorUserId: dispatcher, keepLocked: true, travel });
    expect(summary.crews[0].colonies).toBe(10);
    expect(summary.deferred.map((d) => d.visitId)).toEqual([b.visitIds[0]]);
    expect(summary.deferred[0].message).toMatch(/daily limits/);
    const stops = await db("stops").join("visits", "visits.id", "stops.visit_id").sum("visits.colonies_expected as n").first();
    expect(Number((stops as unknown as { n: string }).n)).toBe(10);
    expect(await db("visits").where({ id: b.visitIds[0] }).first("status")).toEqual({ status: "deferred" });
    expect((await db("stops").pluck("visit_id")).map(Number).sort((x, y) => x - y)).toEqual([a.visitIds[0], c.visitIds[0]].sort((x, y) => x - y));

    // Dragging the deferred stop onto the run is refused: the limit is a hard rule.
    await expect(moveStop(db, { date: monday, visitId: b.visitIds[0], toCrewId: limited, toPosition: 0, actorUserId: dispatcher, travel })).rejects.toMatchObject({
      code: "over_limit",
      message: expect.stringMatching(/Limited crew treats at most 10 colonies a day; with this stop the run would have 15/),
    });
    await expect(moveStop(db, { date: monday, visitId: b.visitIds[0], toCrewId: limited, toPosition: 0, actorUserId: dispatcher, travel })).rejects.toBeInstanceOf(DayPlanRefused);
  });

  it("holds the gram limit with the yards' real brood boxes", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrewRow({ name: "Light crew", maxGrams: 12 });
    // Booked while the crew had no limit; two double-deep yards of 4 colonies take 8 g each.
    await db("crews").update({ max_dose_grams_per_day: null });
    await book(4, monday, { lat: 42.45, lng: -76.48 }, 2);
    await book(4, monday, { lat: 42.46, lng: -76.47 }, 2);
    await db("crews").update({ max_dose_grams_per_day: 12 });
    const summary = await planServiceDay(db, { date: monday, actorUserId: dispatcher, keepLocked: true, travel });
    expect(summary.crews[0]).toMatchObject({ stops: 1, colonies: 4, grams: 8 });
    expect(summary.deferred).toHaveLength(1);
  });
});
