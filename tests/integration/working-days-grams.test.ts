import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { isoWeekdayOf } from "~/domain/capacity";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { bookYards, BookingRefused } from "~/models/bookings.server";
import { roomBetween } from "~/models/capacity.server";
import { changeWorkingDay, WorkingDayRefused } from "~/models/working-days.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { resetDatabase } from "./reset-database";

// Working days in grams: closing a crew with a daily gram limit takes its grams off the day,
// so the visits that no longer fit in grams move (and only those), and visits moved off a
// day land only where the crews' grams take them too.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

const settings = defaultBusinessSettings; // 1 g per deep box, 0.7 g per medium box, 0.5 g per nuc box
const today = dateInZone(new Date(), settings.timeZone);
/** A Monday at least 20 days ahead: D, D + 1 and D + 2 are weekdays the crews work. */
const D = (() => {
  let date = addCalendarDays(today, 20);
  while (isoWeekdayOf(date) !== 1) date = addCalendarDays(date, 1);
  return date;
})();
const WEEKDAYS_MON_FRI = [1, 2, 3, 4, 5];

let seq = 0;
async function aUser(role: "crew" | "dispatcher" | "customer", name = `${role} ${seq}`) {
  seq++;
  const [user] = await db("users")
    .insert({ email: `${role}${seq}.${Math.random().toString(36).slice(2, 8)}@example.test`, password_hash: "x", role, name })
    .returning("id");
  return Number(user.id);
}

async function aCrew(name: string, maxGrams: number | null): Promise<number> {
  const [crew] = await db("crews")
    .insert({
      name,
      start_label: `${name} shop`,
      start_lat: 42.44,
      start_lng: -76.5,
      work_start: "08:00",
      work_end: "17:00",
      vaporizers: 2,
      working_weekdays: WEEKDAYS_MON_FRI,
      max_dose_grams_per_day: maxGrams,
    })
    .returning("id");
  const member = await aUser("crew", `${name} member`);
  await db("crew_members").insert({ crew_id: crew.id, user_id: member });
  return Number(crew.id);
}

type Shape = { colonies: number; boxType: "deep" | "medium" | "nuc"; boxes: number };
type Customer = { userId: number; customerId: number; yardId: number };

async function aCustomerWithYard(shape: Shape, name = `Keeper ${seq + 1}`): Promise<Customer> {
  const userId = await aUser("customer");
  const tag = Math.random().toString(36).slice(2, 8);
  const [customer] = await db("customers").insert({ user_id: userId, name, email: `keeper${seq}.${tag}@example.test` }).returning("id");
  const [yard] = await db("yards")
    .insert({
      customer_id: customer.id,
      name: `${name}'s yard`,
      lat: 42.45 + (seq % 10) * 0.003,
      lng: -76.48,
      colony_count: shape.colonies,
      box_type: shape.boxType,
      brood_boxes_per_colony: shape.boxes,
      brood_status: "broodless",
    })
    .returning("id");
  return { userId, customerId: Number(customer.id), yardId: Number(yard.id) };
}

/** A customer with one yard booked on `date` through the real booking path; its visit id. */
async function aBooking(shape: Shape, date: string, name?: string): Promise<number> {
  const c = await aCustomerWithYard(shape, name);
  const result = await bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yardId], serviceDate: date, timePreference: "any", notes: null });
  return result.visitIds[0];
}

async function dateOf(visitId: number): Promise<string> {
  return (await db("visits").where({ id: visitId }).first("service_date"))!.service_date;
}

/** No day from D to D + 70 holds more colonies, or more grams, than it can take. */
async function expectNoDayOverfilled() {
  for (const room of await roomBetween(db, settings, D, addCalendarDays(D, 70))) {
    expect(room.booked, room.date).toBeLessThanOrEqual(room.capacity);
    if (room.gramsCapacity != null) expect(room.gramsBooked, room.date).toBeLessThanOrEqual(room.gramsCapacity);
  }
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

describe("closing the day of a crew with a daily gram limit", () => {
  it("moves the visits that no longer fit in grams, and not the others, to a day whose grams take them", async () => {
    const dispatcher = await aUser("dispatcher");
    const crewA = await aCrew("Crew A", 20);
    await aCrew("Crew B", 10);
    // D + 1 has 18 g of its 30 g booked: 12 g left.
    await aBooking({ colonies: 9, boxType: "deep", boxes: 2 }, addCalendarDays(D, 1), "Early");
    const six = await aBooking({ colonies: 3, boxType: "deep", boxes: 2 }, D, "Ann"); // 6 g
    const eight = await aBooking({ colonies: 4, boxType: "deep", boxes: 2 }, D, "Bo"); // 8 g
    const two = await aBooking({ colonies: 2, boxType: "deep", boxes: 1 }, D, "Cy"); // 2 g
    const seven = await aBooking({ colonies: 5, boxType: "medium", boxes: 2 }, D, "Di"); // 7 g
    expect((await roomBetween(db, settings, D, D))[0]).toMatchObject({ booked: 14, gramsCapacity: 30, gramsBooked: 23 });

    const result = await changeWorkingDay(db, { intent: "close_crew_day", date: D, crewId: crewA, note: "Truck in the shop" }, dispatcher);

    // Crew B alone still has room for the 14 colonies: grams are what moves visits.
    expect(result.room.capacity).toBeGreaterThanOrEqual(14);
    expect(result.room.gramsCapacity).toBe(10);
    // 6 g stays; 6 + 8 > 10 moves; 6 + 2 = 8 stays; 8 + 7 > 10 moves.
    // 8 g fits the 12 g left on D + 1 (4 g left then); 7 g does not, so it goes to D + 2.
    expect(result.moved.map((m) => [m.visitId, m.toDate])).toEqual([
      [eight, addCalendarDays(D, 1)],
      [seven, addCalendarDays(D, 2)],
    ]);
    expect(await dateOf(six)).toBe(D);
    expect(await dateOf(two)).toBe(D);
    expect(result.room).toMatchObject({ booked: 5, gramsBooked: 8, gramsRemaining: 2 });
    // The audit entry keeps the day's grams as well as its colonies, before and after.
    const audit = await db("audit_log").where({ action: "crew_day.close", entity_id: D }).first("before", "after");
    expect(audit?.before).toMatchObject({ booked: 14, gramsCapacity: 30, gramsBooked: 23 });
    expect(audit?.after).toMatchObject({ gramsCapacityNow: 10, gramsBookedNow: 8 });
    expect((await roomBetween(db, settings, addCalendarDays(D, 1), addCalendarDays(D, 1)))[0]).toMatchObject({ gramsBooked: 26, gramsRemaining: 4 });
    await expectNoDayOverfilled();
    // Each moved visit is audited and its customer e-mailed.
    expect((await db("audit_log").where({ action: "visit.reschedule" }).orderBy("id").pluck("entity_id")).map(Number)).toEqual([eight, seven]);
    expect((await db("email_log").where({ kind: "visit_rescheduled" }).pluck("visit_id")).map(Number).sort((a, b) => a - b)).toEqual([eight, seven].sort((a, b) => a - b));
  });

  it("moves nothing for grams when the crew still working has no gram limit", async () => {
    const dispatcher = await aUser("dispatcher");
    const crewA = await aCrew("Crew A", 20);
    await aCrew("Crew B", null);
    const visits = [
      await aBooking({ colonies: 3, boxType: "deep", boxes: 2 }, D),
      await aBooking({ colonies: 4, boxType: "deep", boxes: 2 }, D),
      await aBooking({ colonies: 5, boxType: "medium", boxes: 2 }, D),
    ];
    const result = await changeWorkingDay(db, { intent: "close_crew_day", date: D, crewId: crewA, note: "Sick" }, dispatcher);
    expect(result.room).toMatchObject({ gramsCapacity: null, gramsBooked: 21, gramsRemaining: null });
    expect(result.moved).toEqual([]);
    for (const id of visits) expect(await dateOf(id)).toBe(D);
  });

  it("refuses, naming grams, when visits under way take more grams than the day's crews could then apply, and writes nothing", async () => {
    const dispatcher = await aUser("dispatcher");
    const crewA = await aCrew("Crew A", 20);
    await aCrew("Crew B", 10);
    const started = await aBooking({ colonies: 7, boxType: "deep", boxes: 2 }, D, "Ann"); // 14 g
    await db("visits").where({ id: started }).update({ status: "in_progress" });

    const refused = await refusal(changeWorkingDay(db, { intent: "close_crew_day", date: D, crewId: crewA, note: "Sick" }, dispatcher));
    expect(refused.field).toBe("form");
    expect(refused.message).toBe(
      "Nothing was changed: the day's crews could then apply 10 g, but visits on published runs or under way take 14 g (Ann's yard of Ann). Re-plan the day with published runs included first, or leave the day's crews more grams.",
    );
    expect(await db("crew_days").where({ crew_id: crewA, service_date: D }).first()).toBeUndefined();
    expect(await db("audit_log").whereIn("action", ["crew_day.close", "visit.reschedule"]).count("* as n").first()).toEqual({ n: 0 });
    expect(await dateOf(started)).toBe(D);
  });
});

describe("moving visits off a closed day, in grams", () => {
  it("skips a day with the colonies but not the grams, and fills it with a later, lighter visit", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A", 20);
    await aCrew("Crew B", 10);
    await aBooking({ colonies: 9, boxType: "deep", boxes: 2 }, addCalendarDays(D, 1)); // 18 g of 30 on D + 1
    const heavy = await aBooking({ colonies: 8, boxType: "deep", boxes: 2 }, D, "Ann"); // 16 g
    const light = await aBooking({ colonies: 5, boxType: "deep", boxes: 2 }, D, "Bo"); // 10 g
    const [next] = await roomBetween(db, settings, addCalendarDays(D, 1), addCalendarDays(D, 1));
    expect(next.remaining).toBeGreaterThanOrEqual(8); // the colonies would fit D + 1

    const result = await changeWorkingDay(db, { intent: "close_day", date: D, note: "Rain all day" }, dispatcher);
    expect(result.moved.map((m) => [m.visitId, m.toDate])).toEqual([
      [heavy, addCalendarDays(D, 2)],
      [light, addCalendarDays(D, 1)],
    ]);
    expect((await roomBetween(db, settings, addCalendarDays(D, 1), addCalendarDays(D, 2))).map((r) => r.gramsBooked)).toEqual([28, 16]);
    await expectNoDayOverfilled();
  });

  it("refuses, naming the grams, when no day's crews can apply what a visit needs", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A", 20);
    await aCrew("Crew B", 10);
    // 16 colonies of 2 deep boxes: 32 g, more than any day's 30 g (put there before the limits were cut, say).
    const c = await aCustomerWithYard({ colonies: 16, boxType: "deep", boxes: 2 }, "Ann");
    const [booking] = await db("bookings").insert({ customer_id: c.customerId, yard_id: c.yardId, service_date: D, colonies: 16 }).returning("id");
    const [course] = await db("courses").insert({ yard_id: c.yardId, booking_id: booking.id, brood_status: "broodless", rounds_planned: 1, interval_days: 0 }).returning("id");
    const [visit] = await db("visits")
      .insert({ course_id: course.id, yard_id: c.yardId, round_number: 1, service_date: D, status: "scheduled", colonies_expected: 16 })
      .returning("id");
    expect((await roomBetween(db, settings, addCalendarDays(D, 1), addCalendarDays(D, 1)))[0].remaining).toBeGreaterThanOrEqual(16);

    const refused = await refusal(changeWorkingDay(db, { intent: "close_day", date: D, note: "Holiday" }, dispatcher));
    expect(refused.message).toMatch(/^Nothing was changed: no day from .+ to .+ has room for Ann's yard of Ann \(16 colonies, 32 g\) \(the crews' daily gram limits leave too few grams/);
    expect(refused.message).toMatch(/Raise a day's capacity or a crew's daily gram limit, or move that visit yourself first\.$/);
    expect(await dateOf(Number(visit.id))).toBe(D);
    expect((await db("service_days").where({ service_date: D }).first("closed"))?.closed ?? false).toBe(false);
  });

  it("never overfills a day's grams while bookings arrive on the days the visits move to", async () => {
    const dispatcher = await aUser("dispatcher");
    await aCrew("Crew A", 20);
    await aCrew("Crew B", 10);
    // D + 1 and D + 2 have 18 g of their 30 g booked: each takes one 8 g visit, or two 6 g bookings.
    await aBooking({ colonies: 9, boxType: "deep", boxes: 2 }, addCalendarDays(D, 1));
    await aBooking({ colonies: 9, boxType: "deep", boxes: 2 }, addCalendarDays(D, 2));
    const onDay = [
      await aBooking({ colonies: 4, boxType: "deep", boxes: 2 }, D), // 8 g each
      await aBooking({ colonies: 4, boxType: "deep", boxes: 2 }, D),
      await aBooking({ colonies: 4, boxType: "deep", boxes: 2 }, D),
    ];
    const arriving = await Promise.all(Array.from({ length: 8 }, () => aCustomerWithYard({ colonies: 3, boxType: "deep", boxes: 2 }))); // 6 g each
    const calls = arriving.map((c, i) =>
      bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yardId], serviceDate: addCalendarDays(D, 1 + (i % 2)), timePreference: "any", notes: null }),
    );
    const [closing, ...outcomes] = await Promise.allSettled([changeWorkingDay(db, { intent: "close_day", date: D, note: "Storm" }, dispatcher), ...calls]);
    expect(closing.status).toBe("fulfilled");
    for (const o of outcomes) if (o.status === "rejected") expect(o.reason).toBeInstanceOf(BookingRefused);
    for (const id of onDay) expect(await dateOf(id)).not.toBe(D);
    await expectNoDayOverfilled();
  });
});
