import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { bookYards, BookingRefused } from "~/models/bookings.server";
import { roomBetween } from "~/models/capacity.server";
import { defaultBusinessSettings } from "~/domain/settings";
import { addCalendarDays } from "~/domain/courses";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { resetDatabase } from "./reset-database";

afterAll(() => db.destroy());
beforeEach(() => resetDatabase(db));

const today = dateInZone(new Date(), defaultBusinessSettings.timeZone);
const day = addCalendarDays(today, 10);

async function aCustomerWithYards(n: number, colonies: (i: number) => number, brood: "brood" | "broodless" = "broodless") {
  const [user] = await db("users").insert({ email: `c${Math.random().toString(36).slice(2)}@example.test`, password_hash: "x", role: "customer", name: "C" }).returning("id");
  const [customer] = await db("customers").insert({ user_id: user.id, name: "C", email: `${user.id}@example.test` }).returning("id");
  const yards: { id: number; colonies: number }[] = [];
  for (let i = 0; i < n; i++) {
    const count = colonies(i);
    const [yard] = await db("yards")
      .insert({ customer_id: customer.id, name: `Yard ${i + 1}`, lat: 42.4 + i * 0.01, lng: -76.4, colony_count: count, brood_status: brood })
      .returning("id");
    yards.push({ id: yard.id, colonies: count });
  }
  return { userId: user.id as number, customerId: customer.id as number, yards };
}

async function aCrew() {
  await db("crews").insert({ name: "Crew A", start_label: "Shop", start_lat: 42.44, start_lng: -76.5, work_start: "08:00", work_end: "17:00", vaporizers: 2 });
}

describe("booking", () => {
  it("creates a booking, a course with the rounds the brood needs, the first visit, and an audit entry", async () => {
    await aCrew();
    const { userId, customerId, yards } = await aCustomerWithYards(2, () => 4, "brood");
    const result = await bookYards(db, { customerId, userId, yardIds: yards.map((y) => y.id), serviceDate: day, timePreference: "morning", notes: null });
    expect(result.colonies).toBe(8);
    const courses = await db("courses").whereIn("yard_id", yards.map((y) => y.id));
    expect(courses.map((c) => c.rounds_planned)).toEqual([3, 3]);
    expect(courses.every((c) => c.interval_days === defaultBusinessSettings.roundIntervalDays)).toBe(true);
    const visits = await db("visits").whereIn("id", result.visitIds);
    expect(visits.map((v) => [v.service_date, v.round_number, v.time_preference, v.status])).toEqual([
      [day, 1, "morning", "scheduled"],
      [day, 1, "morning", "scheduled"],
    ]);
    expect(await db("audit_log").where({ action: "booking.create" })).toHaveLength(2);
    expect(await db("email_log").where({ kind: "booking_confirmation" })).toHaveLength(1);
  });

  it("refuses the past, today, a yard of another customer, an empty yard, and a yard already booked", async () => {
    await aCrew();
    const a = await aCustomerWithYards(2, (i) => (i === 0 ? 3 : 0));
    const b = await aCustomerWithYards(1, () => 2);
    const base = { customerId: a.customerId, userId: a.userId, timePreference: "any" as const, notes: null };
    const refusal = (p: Promise<unknown>) => p.then(() => null, (e) => e as BookingRefused);
    expect(await refusal(bookYards(db, { ...base, yardIds: [a.yards[0].id], serviceDate: today }))).toMatchObject({ field: "serviceDate" });
    expect(await refusal(bookYards(db, { ...base, yardIds: [b.yards[0].id], serviceDate: day }))).toMatchObject({ field: "yardIds" });
    expect(await refusal(bookYards(db, { ...base, yardIds: [a.yards[1].id], serviceDate: day }))).toMatchObject({ field: "yardIds", message: /no colonies/ });
    await bookYards(db, { ...base, yardIds: [a.yards[0].id], serviceDate: day });
    expect(await refusal(bookYards(db, { ...base, yardIds: [a.yards[0].id], serviceDate: addCalendarDays(day, 1) }))).toMatchObject({ field: "yardIds", message: /already has a visit/ });
    expect(await db("bookings").count("* as n").first()).toEqual({ n: 1 });
  });

  it("takes at most the day's room under 40 concurrent requests, refusing the rest with a clear message and no partial rows", async () => {
    await aCrew();
    await db("service_days").insert({ service_date: day, capacity_colonies: 25 });
    // 40 customers, one yard each of 1–5 colonies (120 colonies asked for in all).
    const customers = await Promise.all(Array.from({ length: 40 }, (_, i) => aCustomerWithYards(1, () => (i % 5) + 1)));
    const outcomes = await Promise.allSettled(
      customers.map((c) => bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yards[0].id], serviceDate: day, timePreference: "any", notes: null })),
    );
    const accepted = outcomes.filter((o) => o.status === "fulfilled");
    const refused = outcomes.filter((o): o is PromiseRejectedResult => o.status === "rejected");
    expect(accepted.length + refused.length).toBe(40);
    expect(refused.length).toBeGreaterThan(0);
    for (const r of refused) {
      expect(r.reason).toBeInstanceOf(BookingRefused);
      expect(r.reason.message).toMatch(/That day (is full|has room for \d+ more colonies)/);
    }
    const colonies = (await db("visits").where({ service_date: day }).sum("colonies_expected as n").first()) as unknown as { n: number };
    expect(colonies.n).toBeLessThanOrEqual(25);
    const acceptedColonies = accepted.reduce((sum, o) => sum + (o as PromiseFulfilledResult<{ colonies: number }>).value.colonies, 0);
    expect(colonies.n).toBe(acceptedColonies);
    // No partial rows: every booking has its course and visit, and nothing else exists.
    const counts = await Promise.all(["bookings", "courses", "visits"].map((t) => db(t).count("* as n").first()));
    expect(counts).toEqual([{ n: accepted.length }, { n: accepted.length }, { n: accepted.length }]);
    expect(await db("email_log").count("* as n").first()).toEqual({ n: accepted.length });
    const [room] = await roomBetween(db, defaultBusinessSettings, day, day);
    expect(room.remaining).toBe(25 - acceptedColonies);
  });

  it("counts a closed day as full and follows the crews' working hours otherwise", async () => {
    await aCrew();
    const { userId, customerId, yards } = await aCustomerWithYards(1, () => 3);
    await db("service_days").insert({ service_date: day, closed: true });
    await expect(bookYards(db, { customerId, userId, yardIds: [yards[0].id], serviceDate: day, timePreference: "any", notes: null })).rejects.toThrow(/not open for bookings/);
    const [open] = await roomBetween(db, defaultBusinessSettings, addCalendarDays(day, 1), addCalendarDays(day, 1));
    expect(open.capacity).toBeGreaterThan(0);
    await db("crews").update({ work_end: "09:00" });
    const [short] = await roomBetween(db, defaultBusinessSettings, addCalendarDays(day, 1), addCalendarDays(day, 1));
    expect(short.capacity).toBeLessThan(open.capacity);
  });
});
