import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { minutesAfterZonedMidnight } from "~/domain/zoned-time";
import {
  dayPlanningData,
  DayPlanRefused,
  moveDeferredToNextDayWithRoom,
  moveStop,
  planServiceDay,
  publishRun,
  setStopLock,
  type DayPlanningData,
} from "~/models/day-plan.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { resetDatabase } from "./reset-database";

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

const TZ = defaultBusinessSettings.timeZone;
const today = dateInZone(new Date(), TZ);
const day = addCalendarDays(today, 10);
const travel = { osrmUrl: null }; // the built-in estimate, whatever the environment says

let seq = 0;
async function aUser(role: "crew" | "dispatcher" | "customer", name: string) {
  seq++;
  const [user] = await db("users")
    .insert({ email: `${role}${seq}.${Math.random().toString(36).slice(2, 8)}@example.test`, password_hash: "x", role, name })
    .returning(["id", "email"]);
  return { id: Number(user.id), email: user.email as string };
}

async function aCrew(name: string, start: { lat: number; lng: number }, vaporizers: number, hours = { start: "08:00", end: "17:00" }) {
  const [crew] = await db("crews")
    .insert({ name, start_label: `${name} shop`, start_lat: start.lat, start_lng: start.lng, work_start: hours.start, work_end: hours.end, vaporizers })
    .returning("id");
  const members = [await aUser("crew", `${name} member 1`), await aUser("crew", `${name} member 2`)];
  await db("crew_members").insert(members.map((m) => ({ crew_id: crew.id, user_id: m.id })));
  return { id: Number(crew.id), members };
}

async function aVisit(input: {
  name: string;
  lat: number;
  lng: number;
  colonies: number;
  pref?: "any" | "morning" | "afternoon";
  date?: string;
  bookedDaysAgo?: number;
}) {
  seq++;
  const date = input.date ?? day;
  const [customer] = await db("customers").insert({ name: `Customer ${input.name}`, email: `c${seq}@example.test` }).returning("id");
  const [yard] = await db("yards")
    .insert({ customer_id: customer.id, name: input.name, lat: input.lat, lng: input.lng, colony_count: input.colonies, brood_boxes_per_colony: 2, brood_status: "broodless", access_notes: "Gate code 1234; dogs; park by the barn" })
    .returning("id");
  const bookedAt = new Date(Date.now() - (input.bookedDaysAgo ?? 5) * 86_400_000 - seq * 60_000);
  const [booking] = await db("bookings")
    .insert({ customer_id: customer.id, yard_id: yard.id, service_date: date, time_preference: input.pref ?? "any", colonies: input.colonies, created_at: bookedAt })
    .returning("id");
  const [course] = await db("courses")
    .insert({ yard_id: yard.id, booking_id: booking.id, brood_status: "broodless", rounds_planned: 1, interval_days: 0 })
    .returning("id");
  const [visit] = await db("visits")
    .insert({ course_id: course.id, yard_id: yard.id, round_number: 1, service_date: date, time_preference: input.pref ?? "any", colonies_expected: input.colonies })
    .returning("id");
  return Number(visit.id);
}

/** Two crews and eleven visits around Ithaca: five big morning yards compete for the mornings, one yard is far out of reach. */
async function aBusyDay() {
  const dispatcher = await aUser("dispatcher", "Dee Spatcher");
  const crewA = await aCrew("Crew A", { lat: 42.44, lng: -76.5 }, 2);
  const crewB = await aCrew("Crew B", { lat: 42.49, lng: -76.3 }, 1);
  const anyTime = [
    await aVisit({ name: "Cayuga Heights", lat: 42.47, lng: -76.49, colonies: 4, bookedDaysAgo: 9 }),
    await aVisit({ name: "Six Mile Creek", lat: 42.41, lng: -76.46, colonies: 3, bookedDaysAgo: 8 }),
    await aVisit({ name: "Varna Orchard", lat: 42.45, lng: -76.43, colonies: 6, bookedDaysAgo: 7 }),
    await aVisit({ name: "Etna Lane", lat: 42.48, lng: -76.38, colonies: 2, bookedDaysAgo: 6 }),
    await aVisit({ name: "Freeville Pond", lat: 42.51, lng: -76.35, colonies: 5, bookedDaysAgo: 5 }),
  ];
  const morning = [
    await aVisit({ name: "Lansing Ridge", lat: 42.54, lng: -76.5, colonies: 20, pref: "morning", bookedDaysAgo: 12 }),
    await aVisit({ name: "Dryden Hill", lat: 42.5, lng: -76.28, colonies: 20, pref: "morning", bookedDaysAgo: 11 }),
    await aVisit({ name: "Enfield Glen", lat: 42.41, lng: -76.62, colonies: 20, pref: "morning", bookedDaysAgo: 10 }),
    await aVisit({ name: "Groton Flats", lat: 42.59, lng: -76.36, colonies: 20, pref: "morning", bookedDaysAgo: 4 }),
    await aVisit({ name: "Newfield Woods", lat: 42.36, lng: -76.59, colonies: 20, pref: "morning", bookedDaysAgo: 3 }),
  ];
  const far = await aVisit({ name: "Adirondack Camp", lat: 44.9, lng: -74.0, colonies: 3, pref: "afternoon", bookedDaysAgo: 20 });
  return { dispatcher, crewA, crewB, anyTime, morning, far };
}

type StoredStop = { visit_id: number; run_id: number; position: number; arrive_at: Date; start_at: Date; leave_at: Date; locked: boolean; crew_id: number };

async function storedStops(): Promise<StoredStop[]> {
  return db("stops")
    .join("runs", "runs.id", "stops.run_id")
    .orderBy([{ column: "runs.crew_id" }, { column: "stops.position" }])
    .select("stops.visit_id", "stops.run_id", "stops.position", "stops.arrive_at", "stops.start_at", "stops.leave_at", "stops.locked", "runs.crew_id") as unknown as Promise<StoredStop[]>;
}

/** Times in order, windows and working hours kept, as the stops_times_check constraint wants. */
function expectConsistentRuns(data: DayPlanningData, { windowsKept = true } = {}) {
  for (const run of data.runs) {
    const crew = data.crews.find((c) => c.crewId === run.crewId)!;
    expect(run.stops.map((s) => s.position)).toEqual(run.stops.map((_, i) => i));
    let previousLeave = -Infinity;
    for (const stop of run.stops) {
      expect(stop.arriveAt.getTime()).toBeLessThanOrEqual(stop.startAt.getTime());
      expect(stop.startAt.getTime()).toBeLessThanOrEqual(stop.leaveAt.getTime());
      expect(stop.arriveAt.getTime()).toBeGreaterThanOrEqual(previousLeave);
      previousLeave = stop.leaveAt.getTime();
      const start = minutesAfterZonedMidnight(stop.startAt, data.date, data.timeZone);
      const leave = minutesAfterZonedMidnight(stop.leaveAt, data.date, data.timeZone);
      expect(start).toBeGreaterThanOrEqual(crew.workStartMin - 1e-6);
      if (windowsKept) {
        expect(start).toBeGreaterThanOrEqual(stop.window.startMin - 1e-6);
        expect(leave).toBeLessThanOrEqual(stop.window.endMin + 1e-6);
      }
    }
    if (windowsKept && run.returnAt) {
      expect(minutesAfterZonedMidnight(run.returnAt, data.date, data.timeZone)).toBeLessThanOrEqual(crew.workEndMin + 1e-6);
      expect(run.issues).toEqual([]);
    }
    expect(run.driveSeconds).toBeGreaterThanOrEqual(run.stops.reduce((sum, s) => sum + s.driveSecondsFromPrevious, 0));
  }
}

describe("planning a service day", () => {
  it("plans two crews, persists the stops in order within windows and hours, and defers what does not fit with reasons", async () => {
    const { dispatcher, crewA, crewB, morning, far } = await aBusyDay();
    const summary = await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: true, travel });

    expect(summary.provider).toBe("estimate");
    expect(summary.notice).toBeNull();
    expect(summary.crews.map((c) => c.crewId)).toEqual([crewA.id, crewB.id]);
    expect(summary.crews.every((c) => c.stops > 0 && c.status === "draft" && c.finishTime !== null)).toBe(true);

    // The far yard cannot be reached and back within the day; one big morning yard does not fit the mornings.
    const farDeferred = summary.deferred.find((d) => d.visitId === far)!;
    expect(farDeferred.reason).toBe("outside_every_window");
    expect(farDeferred.message).toMatch(/Adirondack Camp of Customer Adirondack Camp/);
    const morningDeferred = summary.deferred.filter((d) => morning.includes(d.visitId));
    expect(morningDeferred.length).toBeGreaterThan(0);
    expect(morningDeferred.every((d) => d.reason === "does_not_fit_day" && /does not fit into any crew's day/.test(d.message))).toBe(true);
    expect(summary.deferred.every((d) => !/\bvisit \d+/i.test(d.message))).toBe(true);

    const visits = await db("visits").orderBy("id").select("id", "status", "defer_reason");
    for (const v of visits) {
      const deferred = summary.deferred.find((d) => d.visitId === Number(v.id));
      if (deferred) expect(v).toMatchObject({ status: "deferred", defer_reason: deferred.message });
      else expect(v).toMatchObject({ status: "scheduled", defer_reason: null });
    }

    const stops = await storedStops();
    expect(stops).toHaveLength(11 - summary.deferred.length);
    expect(summary.colonies).toBe(summary.crews.reduce((sum, c) => sum + c.colonies, 0));
    const data = await dayPlanningData(db, day);
    expectConsistentRuns(data);
    expect(data.unplanned.map((v) => v.visitId).sort()).toEqual(summary.deferred.map((d) => d.visitId).sort());
    for (const run of data.runs) {
      const crewSummary = summary.crews.find((c) => c.crewId === run.crewId)!;
      expect(run.stops).toHaveLength(crewSummary.stops);
      expect(run.driveSeconds).toBe(crewSummary.driveSeconds);
      expect(run.returnAt?.getTime()).toBeCloseTo(crewSummary.finishAt!.getTime(), -3);
    }
    expect(await db("audit_log").where({ action: "service_day.plan" })).toHaveLength(1);
    expect(await db("audit_log").where({ action: "run.plan" })).toHaveLength(2);

    // Same input, same plan.
    const again = await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: true, travel });
    expect(await storedStops()).toEqual(stops.map((s) => ({ ...s, run_id: s.run_id })));
    expect(again.deferred.map((d) => d.visitId)).toEqual(summary.deferred.map((d) => d.visitId));
  });

  it("keeps locked stops with their crew when re-planning, and clears locks when told to ignore them", async () => {
    const { dispatcher, crewA, crewB, anyTime } = await aBusyDay();
    await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: true, travel });
    const before = await storedStops();
    const onA = before.find((s) => s.crew_id === crewA.id && anyTime.includes(s.visit_id))!;
    const moved = await moveStop(db, { date: day, visitId: onA.visit_id, toCrewId: crewB.id, toPosition: 99, actorUserId: dispatcher.id, travel });
    expect(moved.runs.find((r) => r.crewId === crewB.id)!.visitIds.at(-1)).toBe(onA.visit_id);
    await setStopLock(db, { visitId: onA.visit_id, locked: true, actorUserId: dispatcher.id });

    await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: true, travel });
    const kept = (await storedStops()).find((s) => s.visit_id === onA.visit_id)!;
    expect(kept).toMatchObject({ crew_id: crewB.id, locked: true });
    expectConsistentRuns(await dayPlanningData(db, day));

    await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: false, travel });
    expect((await storedStops()).every((s) => !s.locked)).toBe(true);
    expect(await db("audit_log").where({ action: "stop.lock" })).toHaveLength(1);
  });

  it("moves a stop to another crew, re-times both runs and flags the broken window without refusing", async () => {
    const { dispatcher, crewA, crewB, morning } = await aBusyDay();
    await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: true, travel });
    const before = await dayPlanningData(db, day);
    const runA = before.runs.find((r) => r.crewId === crewA.id)!;
    const runB = before.runs.find((r) => r.crewId === crewB.id)!;
    const stop = runA.stops.find((s) => morning.includes(s.visitId))!;

    const result = await moveStop(db, { date: day, visitId: stop.visitId, toCrewId: crewB.id, toPosition: runB.stops.length, actorUserId: dispatcher.id, travel });
    const broken = result.issues.find((i) => i.kind === "window_missed" && i.visitId === stop.visitId)!;
    expect(broken).toBeDefined();
    expect(broken.message).toMatch(new RegExp(`^${stop.yardName} of ${stop.customerName} would finish at \\d\\d:\\d\\d, \\d+ min after its window closes at 12:00\\.$`));
    expect(result.runs.map((r) => r.crewId).sort()).toEqual([crewA.id, crewB.id].sort());

    const after = await dayPlanningData(db, day);
    const newA = after.runs.find((r) => r.crewId === crewA.id)!;
    const newB = after.runs.find((r) => r.crewId === crewB.id)!;
    expect(newA.stops.map((s) => s.visitId)).toEqual(runA.stops.map((s) => s.visitId).filter((id) => id !== stop.visitId));
    expect(newB.stops.map((s) => s.visitId)).toEqual([...runB.stops.map((s) => s.visitId), stop.visitId]);
    expect(newA.driveSeconds).toBe(result.runs.find((r) => r.crewId === crewA.id)!.driveSeconds);
    expect(newB.driveSeconds).toBe(result.runs.find((r) => r.crewId === crewB.id)!.driveSeconds);
    expectConsistentRuns(after, { windowsKept: false });
    // The stored run shows the same problem the move reported.
    expect(newB.issues.map((i) => [i.kind, i.visitId])).toContainEqual(["window_missed", stop.visitId]);
    // Reordering within a run works the same way.
    await moveStop(db, { date: day, visitId: newA.stops[0].visitId, toCrewId: crewA.id, toPosition: 1, actorUserId: dispatcher.id, travel });
    const reordered = (await dayPlanningData(db, day)).runs.find((r) => r.crewId === crewA.id)!;
    expect(reordered.stops.map((s) => s.visitId)).toEqual([newA.stops[1].visitId, newA.stops[0].visitId, ...newA.stops.slice(2).map((s) => s.visitId)]);
    // A deferred visit of the day can be dragged onto a run: it is scheduled again.
    const deferred = after.unplanned.find((v) => v.status === "deferred" && v.yardName !== "Adirondack Camp")!;
    const placed = await moveStop(db, { date: day, visitId: deferred.visitId, toCrewId: crewA.id, toPosition: 0, actorUserId: dispatcher.id, travel });
    expect(placed.runs.find((r) => r.crewId === crewA.id)!.visitIds[0]).toBe(deferred.visitId);
    expect(await db("visits").where({ id: deferred.visitId }).first()).toMatchObject({ status: "scheduled", defer_reason: null });
    expect(await db("audit_log").where({ action: "stop.move" })).toHaveLength(3);
    await expect(moveStop(db, { date: day, visitId: 999999, toCrewId: crewA.id, toPosition: 0, actorUserId: dispatcher.id, travel })).rejects.toBeInstanceOf(DayPlanRefused);
  });

  it("publishes a run with one e-mail per crew member, and a re-planned published run becomes a draft with version + 1", async () => {
    const { dispatcher, crewA } = await aBusyDay();
    await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: true, travel });
    const run = await db("runs").where({ crew_id: crewA.id, service_date: day }).first();
    const published = await publishRun(db, { runId: run!.id, actorUserId: dispatcher.id });
    expect(published).toMatchObject({ published: true, version: 1, crewName: "Crew A" });
    expect(published.recipients.sort()).toEqual(crewA.members.map((m) => m.email).sort());
    const row = await db("runs").where({ id: run!.id }).first();
    expect(row).toMatchObject({ status: "published", version: 1, published_by: dispatcher.id });
    expect(row!.published_at).toBeInstanceOf(Date);
    const emails = await db("email_log").where({ kind: "run_published" }).orderBy("to_address");
    expect(emails.map((e) => e.to_address)).toEqual(crewA.members.map((m) => m.email).sort());
    expect(emails[0].subject).toMatch(/^Your run: Crew A, /);
    expect(emails[0].text_body).toMatch(/Oxalic acid dihydrate to carry: \d+\.\d\d g/);
    expect(emails[0].text_body).toMatch(/Respirator\./);
    expect(await db("audit_log").where({ action: "run.publish" })).toHaveLength(1);
    // Publishing again sends nothing more.
    expect((await publishRun(db, { runId: run!.id, actorUserId: dispatcher.id })).published).toBe(false);
    expect(await db("email_log").where({ kind: "run_published" })).toHaveLength(2);

    // A plain re-plan keeps the published run as it is.
    const keep = await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: true, travel });
    expect(keep.keptRuns).toEqual([{ runId: run!.id, crewId: crewA.id, crewName: "Crew A", status: "published" }]);
    expect(await db("runs").where({ id: run!.id }).first()).toMatchObject({ status: "published", version: 1 });

    const replanned = await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: true, replanPublished: true, travel });
    expect(await db("runs").where({ id: run!.id }).first()).toMatchObject({ status: "draft", version: 2 });
    expect(replanned.crews.find((c) => c.crewId === crewA.id)).toMatchObject({ runId: run!.id, reopened: true, version: 2 });
    expect(replanned.messages).toContain("Crew A's run was published; it is a draft again (version 2). Publish it again to send the changes to the crew.");
    const republished = await publishRun(db, { runId: run!.id, actorUserId: dispatcher.id });
    expect(republished).toMatchObject({ published: true, version: 2 });
    const changed = await db("email_log").where({ kind: "run_published" }).orderBy("id");
    expect(changed).toHaveLength(4);
    expect(changed[3].subject).toMatch(/^Run changed: Crew A/);
  });

  it("moves a deferred visit to the first later day with room, and refuses clearly when none has", async () => {
    const { dispatcher, far } = await aBusyDay();
    const summary = await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: true, travel });
    const bigDeferred = summary.deferred.find((d) => d.reason === "does_not_fit_day")!;
    await db("service_days").insert([
      { service_date: addCalendarDays(day, 1), closed: true },
      { service_date: addCalendarDays(day, 2), capacity_colonies: 10 },
    ]);
    const moved = await moveDeferredToNextDayWithRoom(db, { visitId: bigDeferred.visitId, actorUserId: dispatcher.id });
    expect(moved).toEqual({ ok: true, date: addCalendarDays(day, 3) });
    expect(await db("visits").where({ id: bigDeferred.visitId }).first()).toMatchObject({ service_date: addCalendarDays(day, 3), status: "scheduled", defer_reason: null });
    expect(await db("email_log").where({ kind: "visit_rescheduled", visit_id: bigDeferred.visitId })).toHaveLength(1);

    await db("visits").where({ id: far }).update({ colonies_expected: 5000 });
    const refused = await moveDeferredToNextDayWithRoom(db, { visitId: far, actorUserId: dispatcher.id });
    expect(refused.ok).toBe(false);
    expect(refused).toMatchObject({ message: expect.stringMatching(/^No day from .+ to .+ has room for 5000 more colonies/) });
  });

  it("stores stop times in the business time zone across the end of daylight time (2026-11-01)", async () => {
    const dispatcher = await aUser("dispatcher", "Dee");
    await aCrew("Crew A", { lat: 42.44, lng: -76.5 }, 2);
    const before = await aVisit({ name: "Shop yard", lat: 42.44, lng: -76.5, colonies: 2, date: "2026-10-31" });
    const after = await aVisit({ name: "Shop yard 2", lat: 42.44, lng: -76.5, colonies: 2, date: "2026-11-01" });
    await planServiceDay(db, { date: "2026-10-31", actorUserId: dispatcher.id, keepLocked: true, travel });
    await planServiceDay(db, { date: "2026-11-01", actorUserId: dispatcher.id, keepLocked: true, travel });
    const stops = await db("stops").orderBy("visit_id").select("visit_id", "arrive_at");
    // The yard is at the shop: the crew arrives at 08:00 local, EDT (UTC−4) on the 31st, EST (UTC−5) on the 1st.
    expect(stops).toEqual([
      { visit_id: before, arrive_at: new Date("2026-10-31T12:00:00Z") },
      { visit_id: after, arrive_at: new Date("2026-11-01T13:00:00Z") },
    ]);
  });
});
