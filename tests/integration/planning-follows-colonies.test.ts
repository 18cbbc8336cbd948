import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { bookYards, BookingRefused } from "~/models/bookings.server";
import { roomBetween, visitDosesPerColony, yardDosesPerColony } from "~/models/capacity.server";
import { dayPlanningData, planServiceDay, publishRun } from "~/models/day-plan.server";
import { runExportForUser } from "~/models/run-exports.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { resetDatabase } from "./reset-database";

// What the crew finds at the hive corrects the colony's record (brood boxes, box type); the
// planning that follows — the day's grams, bookings, the day planner, the run's e-mail —
// goes by the colonies as corrected, not by the yard's older figure.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

// Default rates: 1 g a deep brood box, vaporizer loads of at most 2 g.
const settings = defaultBusinessSettings;
const today = dateInZone(new Date(), settings.timeZone);
const day = addCalendarDays(today, 10);
const travel = { osrmUrl: null }; // the built-in estimate, whatever the environment says

let seq = 0;
function tag(): string {
  seq++;
  return `${seq}.${Math.random().toString(36).slice(2, 8)}`;
}

async function aUser(role: "customer" | "dispatcher" | "crew"): Promise<{ id: number; email: string }> {
  const email = `${role}${tag()}@example.test`;
  const [user] = await db("users").insert({ email, password_hash: "x", role, name: `${role} ${seq}` }).returning("id");
  return { id: Number(user.id), email };
}

async function aCrew(options: { maxGrams: number | null; vaporizers?: number; member?: number }): Promise<number> {
  const [crew] = await db("crews")
    .insert({
      name: `Crew ${tag()}`,
      start_label: "Shop",
      start_lat: 42.44,
      start_lng: -76.5,
      work_start: "08:00",
      work_end: "17:00",
      vaporizers: options.vaporizers ?? 1,
      max_dose_grams_per_day: options.maxGrams,
    })
    .returning("id");
  if (options.member) await db("crew_members").insert({ crew_id: crew.id, user_id: options.member });
  return Number(crew.id);
}

type Yard = { userId: number; customerId: number; yardId: number };

/** A yard on record as 4 colonies of 1 deep brood box each, with its colony rows H1…H4 to match. */
async function aYardOfFourOneBoxColonies(): Promise<Yard> {
  const user = await aUser("customer");
  const [customer] = await db("customers").insert({ user_id: user.id, name: `Customer ${tag()}`, email: `cust${tag()}@example.test` }).returning("id");
  const [yard] = await db("yards")
    .insert({ customer_id: customer.id, name: `Yard ${tag()}`, lat: 42.45, lng: -76.48, colony_count: 4, box_type: "deep", brood_boxes_per_colony: 1, brood_status: "broodless" })
    .returning("id");
  await db("colonies").insert([1, 2, 3, 4].map((n) => ({ yard_id: yard.id, label: `H${n}`, brood_boxes: 1, box_type: "deep", brood_status: "broodless" })));
  return { userId: user.id, customerId: Number(customer.id), yardId: Number(yard.id) };
}

/** The crew found the colony with more boxes than on record: its row is corrected, as recordTally does; the yard's figure stays. */
async function crewFinds(yardId: number, label: string, broodBoxes: number) {
  const updated = await db("colonies").where({ yard_id: yardId, label }).update({ brood_boxes: broodBoxes, updated_at: db.fn.now() });
  expect(updated).toBe(1);
}

async function book(yard: Yard) {
  return bookYards(db, { customerId: yard.customerId, userId: yard.userId, yardIds: [yard.yardId], serviceDate: day, timePreference: "any", notes: null });
}

/** A scheduled first visit of the yard's 4 colonies on the day, booked straight into the tables. */
async function aScheduledVisit(yard: Yard): Promise<number> {
  const [booking] = await db("bookings").insert({ customer_id: yard.customerId, yard_id: yard.yardId, service_date: day, time_preference: "any", colonies: 4 }).returning("id");
  const [course] = await db("courses").insert({ yard_id: yard.yardId, booking_id: booking.id, brood_status: "broodless", rounds_planned: 1, interval_days: 0 }).returning("id");
  const [visit] = await db("visits")
    .insert({ course_id: course.id, yard_id: yard.yardId, round_number: 1, service_date: day, time_preference: "any", colonies_expected: 4 })
    .returning("id");
  return Number(visit.id);
}

describe("the booking capacity after the crew corrects a colony", () => {
  it("counts a scheduled visit's grams at the colonies as corrected, not at the yard's figure", async () => {
    await aCrew({ maxGrams: 20 });
    const yard = await aYardOfFourOneBoxColonies();
    const { visitIds } = await book(yard);
    expect((await roomBetween(db, settings, day, day))[0]).toMatchObject({ booked: 4, gramsBooked: 4, gramsRemaining: 16 });

    // One colony has 3 boxes: (1 + 1 + 3 + 1) / 4 = 1.5 g a colony, 4 × 1.5 g = 6 g.
    await crewFinds(yard.yardId, "H3", 3);
    // A retired colony is not dosed, whatever its boxes.
    await db("colonies").insert({ yard_id: yard.yardId, label: "H5", brood_boxes: 6, box_type: "deep", brood_status: "broodless", active: false });
    expect((await roomBetween(db, settings, day, day))[0]).toMatchObject({ booked: 4, gramsBooked: 6, gramsRemaining: 14 });
    expect((await yardDosesPerColony(db, settings, [yard.yardId])).get(yard.yardId)).toBe(1.5);
    expect((await visitDosesPerColony(db, settings, visitIds)).get(visitIds[0])).toBe(1.5);
    // The yard's own figure was not touched: the colonies are what changed.
    expect(await db("yards").where({ id: yard.yardId }).first("brood_boxes_per_colony")).toEqual({ brood_boxes_per_colony: 1 });
  });

  it("refuses a booking whose corrected grams do not fit, although the yard's figure would", async () => {
    await aCrew({ maxGrams: 5 });
    const yard = await aYardOfFourOneBoxColonies();
    await crewFinds(yard.yardId, "H2", 3);

    // 4 × 1 g = 4 g would fit in 5 g; 4 × 1.5 g = 6 g does not.
    const refused = await book(yard).catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(BookingRefused);
    expect(refused).toMatchObject({ field: "serviceDate", message: "That day's crews can apply 5 g more; this yard needs 6 g. Choose another day or fewer yards." });
    expect(await db("visits").where({ yard_id: yard.yardId }).count("* as n").first()).toEqual({ n: 0 });

    // The same yard with the colony back at 1 box takes 4 g: booked.
    await crewFinds(yard.yardId, "H2", 1);
    await book(yard);
    expect((await roomBetween(db, settings, day, day))[0]).toMatchObject({ booked: 4, gramsBooked: 4, gramsRemaining: 1 });
  });
});

describe("the day planner after the crew corrects a colony", () => {
  it("plans the visit with the corrected grams, the loads of its biggest colony and the minutes they take", async () => {
    const dispatcher = await aUser("dispatcher");
    const member = await aUser("crew");
    await aCrew({ maxGrams: null, vaporizers: 1, member: member.id });
    const yard = await aYardOfFourOneBoxColonies();
    const visitId = await aScheduledVisit(yard);
    // 3 deep boxes take 3 g: two loads of at most 2 g.
    await crewFinds(yard.yardId, "H3", 3);
    await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: false, travel });

    const data = await dayPlanningData(db, day);
    const visit = data.visits.find((v) => v.visitId === visitId)!;
    expect(visit).toMatchObject({ colonies: 4, loadsPerColony: 2, grams: 6 });
    const minutes = (visit.stop!.leaveAt.getTime() - visit.stop!.startAt.getTime()) / 60_000;
    // 4 colonies × 2 loads on 1 vaporizer = 8 cycles: 15 min set-up + 8 × 35 s + 7 × 2 min
    // between + 10 min entrance = 43.67 min; with 1 load each it would be 4 cycles, 33.33 min.
    expect(Math.abs(minutes - 131 / 3)).toBeLessThan(1);

    // The crew's run e-mail tells them to carry the corrected grams.
    const run = await db("runs").where({ service_date: day }).first("id");
    await publishRun(db, { runId: Number(run!.id), actorUserId: dispatcher.id });
    const email = await db("email_log").where({ kind: "run_published", to_address: member.email }).first("text_body");
    expect(email?.text_body).toContain("Oxalic acid dihydrate to carry: 6.00 g");
    // And the run's export gives the stop the same grams.
    const exported = await runExportForUser(db, Number(run!.id), { id: String(dispatcher.id), role: "dispatcher" });
    expect(exported?.stops.find((s) => s.visitId === visitId)?.doseGrams).toBe(6);
  });

  it("keeps a visit off a crew whose gram limit the corrected colonies exceed", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew({ maxGrams: 5 });
    const yard = await aYardOfFourOneBoxColonies();
    const visitId = await aScheduledVisit(yard);
    await crewFinds(yard.yardId, "H1", 3); // 6 g now; 4 g on the yard's figure

    const summary = await planServiceDay(db, { date: day, actorUserId: dispatcher.id, keepLocked: false, travel });
    expect(summary.deferred.map((d) => d.visitId)).toEqual([visitId]);
    expect(await db("stops").where({ visit_id: visitId }).count("* as n").first()).toEqual({ n: 0 });
  });
});
