import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { yardSchema, type YardInput } from "~/forms/yard";
import { bookYards, BookingRefused } from "~/models/bookings.server";
import { roomBetween } from "~/models/capacity.server";
import { updateYard, YardEditRefused } from "~/models/yard-edit.server";
import { action as dispatchEditAction } from "~/routes/dispatch/yard-edit";
import { action as portalEditAction } from "~/routes/portal/yard-edit";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { sessionStorage } from "~/services/session.server";
import { resetDatabase } from "./reset-database";

// Editing a booked yard's colony count changes its scheduled visits, so it takes room on
// their days: it must hold to the same lock and rule as a booking.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

const today = dateInZone(new Date(), defaultBusinessSettings.timeZone);
const day = addCalendarDays(today, 10);

type Customer = { userId: number; customerId: number; yardId: number };

async function aCustomerWithYard(colonies: number): Promise<Customer> {
  const tag = Math.random().toString(36).slice(2);
  const [user] = await db("users").insert({ email: `c${tag}@example.test`, password_hash: "x", role: "customer", name: "C" }).returning("id");
  const [customer] = await db("customers").insert({ user_id: user.id, name: `C ${tag}`, email: `c${tag}@example.test` }).returning("id");
  const [yard] = await db("yards").insert({ customer_id: customer.id, name: `Yard ${tag}`, lat: 42.4, lng: -76.4, colony_count: colonies, brood_status: "broodless" }).returning("id");
  return { userId: user.id, customerId: customer.id, yardId: yard.id };
}

async function aDispatcher(): Promise<number> {
  const [user] = await db("users").insert({ email: `d${Math.random().toString(36).slice(2)}@example.test`, password_hash: "x", role: "dispatcher", name: "Dee" }).returning("id");
  return user.id;
}

/** A customer whose yard is booked on `date` through the real booking path. */
async function aBookedYard(date: string, colonies: number): Promise<Customer> {
  const c = await aCustomerWithYard(colonies);
  await bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yardId], serviceDate: date, timePreference: "any", notes: null });
  return c;
}

async function aDayOf(date: string, capacity: number) {
  await db("service_days").insert({ service_date: date, capacity_colonies: capacity });
}

async function coloniesOn(date: string): Promise<number> {
  const row = (await db("visits").where({ service_date: date }).whereIn("status", ["scheduled", "in_progress", "done"]).sum("colonies_expected as n").first()) as unknown as { n: string | null };
  return Number(row.n ?? 0);
}

function yardInput(colonyCount: number): YardInput {
  return yardSchema.parse({ name: "Orchard", lat: "42.45", lng: "-76.48", colonyCount: String(colonyCount), broodBoxesPerColony: "1", broodStatus: "broodless", supersOff: "on", accessNotes: "" });
}

function formFields(colonyCount: number): Record<string, string> {
  return { name: "Orchard", lat: "42.45", lng: "-76.48", colonyCount: String(colonyCount), broodBoxesPerColony: "1", broodStatus: "broodless", supersOff: "on", accessNotes: "" };
}

async function cookieFor(userId: number): Promise<string> {
  const session = await sessionStorage().getSession();
  session.set("userId", String(userId));
  return (await sessionStorage().commitSession(session)).split(";")[0];
}

type ActionAnswer = { status: number; body: unknown; location: string | null };

/** Calls a route action as the router would, and returns what it answered or threw. */
async function callAction(action: (args: never) => unknown, url: string, userId: number, params: Record<string, string>, body: BodyInit, contentType?: string): Promise<ActionAnswer> {
  const headers = new Headers({ Cookie: await cookieFor(userId) });
  if (contentType) headers.set("Content-Type", contentType);
  const request = new Request(`http://127.0.0.1${url}`, { method: "POST", headers, body });
  let outcome: unknown;
  try {
    outcome = await action({ request, params, context: {} } as never);
  } catch (thrown) {
    outcome = thrown;
  }
  if (outcome instanceof Response) return { status: outcome.status, body: null, location: outcome.headers.get("Location") };
  const answer = outcome as { data?: unknown; init?: { status?: number } | null };
  return { status: answer.init?.status ?? 200, body: answer.data, location: null };
}

function urlEncoded(fields: Record<string, string>) {
  return new URLSearchParams(fields).toString();
}

async function snapshot(c: Customer) {
  const yard = await db("yards").where({ id: c.yardId }).first("colony_count", "name", "updated_at");
  const visits = await db("visits").where({ yard_id: c.yardId }).orderBy("id").select("id", "colonies_expected", "updated_at");
  const colonies = await db("colonies").where({ yard_id: c.yardId }).orderBy("id").select("id", "active");
  const audits = await db("audit_log").where({ action: "yard.update", entity_id: String(c.yardId) }).count("* as n").first();
  return { yard, visits, colonies, audits };
}

describe("editing a booked yard's colony count", () => {
  it("(a) refuses to raise the count on a full day, at the colony-count field, and writes nothing", async () => {
    await aDayOf(day, 30);
    const ours = await aBookedYard(day, 10);
    await aBookedYard(day, 20);
    expect(await coloniesOn(day)).toBe(30);
    const before = await snapshot(ours);

    const refusal = await updateYard(db, ours.customerId, ours.yardId, yardInput(12), ours.userId).then(
      () => null,
      (e: unknown) => e,
    );
    expect(refusal).toBeInstanceOf(YardEditRefused);
    expect(refusal).toMatchObject({ field: "colonyCount" });

    const answer = await callAction(portalEditAction, `/portal/yards/${ours.yardId}/edit`, ours.userId, { yardId: String(ours.yardId) }, urlEncoded(formFields(12)), "application/x-www-form-urlencoded");
    expect(answer.status).toBe(409);
    const body = answer.body as { intent: string; errors: Record<string, string>; values: Record<string, string> };
    expect(body.intent).toBe("save");
    expect(Object.keys(body.errors)).toEqual(["colonyCount"]);
    expect(body.errors.colonyCount).toContain(day);
    expect(body.errors.colonyCount).toMatch(/room for 0 more, 2 needed/);
    expect(body.errors.colonyCount).toMatch(/Book fewer colonies \(at most 10 for now\), or ask us to move the visit/);
    expect(body.values.colonyCount).toBe("12"); // the customer's input is kept

    expect(await snapshot(ours)).toEqual(before);
    expect(await coloniesOn(day)).toBe(30);
  });

  it("(a) names every booked day without room and the room each has left", async () => {
    const later = addCalendarDays(day, 7);
    await aDayOf(day, 30);
    await aDayOf(later, 40);
    const ours = await aBookedYard(day, 10);
    await aBookedYard(day, 17); // 3 left on `day`
    // A second round of our yard, booked ahead on a day with 6 left.
    const course = await db("courses").where({ yard_id: ours.yardId }).first("id");
    await db("visits").insert({ course_id: course!.id, yard_id: ours.yardId, round_number: 2, service_date: later, colonies_expected: 10 });
    await aBookedYard(later, 24);
    const before = await snapshot(ours);

    const answer = await callAction(portalEditAction, `/portal/yards/${ours.yardId}/edit`, ours.userId, { yardId: String(ours.yardId) }, urlEncoded(formFields(18)), "application/x-www-form-urlencoded");
    expect(answer.status).toBe(409);
    const message = (answer.body as { errors: Record<string, string> }).errors.colonyCount;
    expect(message).toContain(`${day} (room for 3 more, 8 needed)`);
    expect(message).toContain(`${later} (room for 6 more, 8 needed)`);
    expect(message).toMatch(/at most 13 for now/);
    expect(await snapshot(ours)).toEqual(before);

    // What the message offers does fit.
    await updateYard(db, ours.customerId, ours.yardId, yardInput(13), ours.userId);
    expect(await coloniesOn(day)).toBe(30);
    expect(await coloniesOn(later)).toBe(37);
  });

  it("(b) lets a count shrink on a full day, even an overfull or closed one, and holds a raise to the room left", async () => {
    await aDayOf(day, 30);
    const ours = await aBookedYard(day, 10);
    await aBookedYard(day, 20);
    const answer = await callAction(portalEditAction, `/portal/yards/${ours.yardId}/edit`, ours.userId, { yardId: String(ours.yardId) }, urlEncoded(formFields(8)), "application/x-www-form-urlencoded");
    expect(answer).toMatchObject({ status: 302, location: `/portal/yards/${ours.yardId}?saved=1` });
    expect(await db("visits").where({ yard_id: ours.yardId }).pluck("colonies_expected")).toEqual([8]);
    expect(await coloniesOn(day)).toBe(28);

    // The room the shrink freed can be taken back, and no more.
    expect(await updateYard(db, ours.customerId, ours.yardId, yardInput(10), ours.userId)).toBe(true);
    await expect(updateYard(db, ours.customerId, ours.yardId, yardInput(11), ours.userId)).rejects.toBeInstanceOf(YardEditRefused);
    expect(await coloniesOn(day)).toBe(30);

    // The dispatcher cut the day below what is booked: shrinking still passes.
    await db("service_days").where({ service_date: day }).update({ capacity_colonies: 20 });
    expect(await updateYard(db, ours.customerId, ours.yardId, yardInput(7), ours.userId)).toBe(true);
    await db("service_days").where({ service_date: day }).update({ closed: true });
    expect(await updateYard(db, ours.customerId, ours.yardId, yardInput(5), ours.userId)).toBe(true);
    expect(await db("yards").where({ id: ours.yardId }).first("colony_count")).toEqual({ colony_count: 5 });
    expect(await db("visits").where({ yard_id: ours.yardId }).pluck("colonies_expected")).toEqual([5]);
    // …but a closed day takes no more colonies.
    await expect(updateYard(db, ours.customerId, ours.yardId, yardInput(6), ours.userId)).rejects.toThrow(/closed/);
  });

  it("(c) never overfills a day when a booking and an edit race for its last room", async () => {
    const rounds = 15;
    for (let i = 0; i < rounds; i++) {
      const date = addCalendarDays(day, i);
      await aDayOf(date, 30);
      const editor = await aBookedYard(date, 10);
      await aBookedYard(date, 15); // 5 left: the edit (+4) or the booking (3), not both
      const booker = await aCustomerWithYard(3);
      const [edit, booking] = await Promise.allSettled([
        updateYard(db, editor.customerId, editor.yardId, yardInput(14), editor.userId),
        bookYards(db, { customerId: booker.customerId, userId: booker.userId, yardIds: [booker.yardId], serviceDate: date, timePreference: "any", notes: null }),
      ]);
      expect(await coloniesOn(date)).toBeLessThanOrEqual(30);
      const [room] = await roomBetween(db, defaultBusinessSettings, date, date);
      expect(room.booked).toBeLessThanOrEqual(room.capacity);
      // Exactly one of them got the room, and the loser was refused with its own message.
      expect([edit.status, booking.status].sort()).toEqual(["fulfilled", "rejected"]);
      if (edit.status === "rejected") expect(edit.reason).toBeInstanceOf(YardEditRefused);
      if (booking.status === "rejected") expect(booking.reason).toBeInstanceOf(BookingRefused);
      // The yard and its visit agree: a refused edit left both as they were.
      const yard = await db("yards").where({ id: editor.yardId }).first("colony_count");
      expect(await db("visits").where({ yard_id: editor.yardId }).pluck("colonies_expected")).toEqual([yard!.colony_count]);
    }
  });

  it("(d) holds the dispatcher's edit to the same rule, pointing to the visit page", async () => {
    await aDayOf(day, 30);
    const ours = await aBookedYard(day, 10);
    await aBookedYard(day, 17);
    const dispatcher = await aDispatcher();
    const visit = await db("visits").where({ yard_id: ours.yardId }).first("id");
    const before = await snapshot(ours);

    const answer = await callAction(dispatchEditAction, `/dispatch/yards/${ours.yardId}/edit`, dispatcher, { yardId: String(ours.yardId) }, urlEncoded(formFields(15)), "application/x-www-form-urlencoded");
    expect(answer.status).toBe(409);
    const body = answer.body as { errors: Record<string, string>; crowdedVisits: { visitId: number; date: string }[] };
    expect(Object.keys(body.errors)).toEqual(["colonyCount"]);
    expect(body.errors.colonyCount).toContain(`${day} (room for 3 more, 5 needed)`);
    expect(body.errors.colonyCount).toContain(`/dispatch/visits/${visit!.id}`);
    expect(body.errors.colonyCount).toMatch(/keep the count at 13 or fewer/);
    expect(body.crowdedVisits).toEqual([{ visitId: visit!.id, date: day }]);
    expect(await snapshot(ours)).toEqual(before);
    expect(await coloniesOn(day)).toBe(27);

    const fits = await callAction(dispatchEditAction, `/dispatch/yards/${ours.yardId}/edit`, dispatcher, { yardId: String(ours.yardId) }, urlEncoded(formFields(13)), "application/x-www-form-urlencoded");
    expect(fits).toMatchObject({ status: 302, location: `/dispatch/yards/${ours.yardId}?saved=1` });
    expect(await coloniesOn(day)).toBe(30);
  });
});

describe("the yard edit routes read their requests", () => {
  it("answer 400 to a body that is not a form, and 404 to a yard id no database holds", async () => {
    const ours = await aCustomerWithYard(4);
    const dispatcher = await aDispatcher();
    const json = JSON.stringify(formFields(5));
    const portal = await callAction(portalEditAction, `/portal/yards/${ours.yardId}/edit`, ours.userId, { yardId: String(ours.yardId) }, json, "application/json");
    expect(portal.status).toBe(400);
    expect(portal.body).toMatchObject({ message: /takes a form/ });
    const dispatch = await callAction(dispatchEditAction, `/dispatch/yards/${ours.yardId}/edit`, dispatcher, { yardId: String(ours.yardId) }, json, "application/json");
    expect(dispatch.status).toBe(400);
    for (const yardId of ["99999999999999999999", "0", "abc"]) {
      expect((await callAction(portalEditAction, `/portal/yards/${yardId}/edit`, ours.userId, { yardId }, urlEncoded(formFields(5)), "application/x-www-form-urlencoded")).status).toBe(404);
      expect((await callAction(dispatchEditAction, `/dispatch/yards/${yardId}/edit`, dispatcher, { yardId }, urlEncoded(formFields(5)), "application/x-www-form-urlencoded")).status).toBe(404);
    }
    expect(await db("yards").where({ id: ours.yardId }).first("colony_count")).toEqual({ colony_count: 4 });
  });

  it("answer a malformed photo upload with 400 and a message at the photo field", async () => {
    const ours = await aCustomerWithYard(4);
    const url = `/portal/yards/${ours.yardId}/edit`;
    const params = { yardId: String(ours.yardId) };
    const noBoundary = await callAction(portalEditAction, url, ours.userId, params, "--x\r\nnot a part", "multipart/form-data");
    expect(noBoundary).toMatchObject({ status: 400, body: { intent: "photo", photoError: expect.stringMatching(/could not be read/) } });
    const cutShort = await callAction(portalEditAction, url, ours.userId, params, '--b\r\nContent-Disposition: form-data; name="photo"; filename="a.png"\r\n\r\nabc', "multipart/form-data; boundary=b");
    expect(cutShort).toMatchObject({ status: 400, body: { intent: "photo", photoError: expect.stringMatching(/could not be read/) } });
    const twoFiles = new FormData();
    twoFiles.append("photo", new File([new Uint8Array([1])], "a.png"));
    twoFiles.append("photo", new File([new Uint8Array([2])], "b.png"));
    const many = await callAction(portalEditAction, url, ours.userId, params, twoFiles);
    expect(many).toMatchObject({ status: 400, body: { intent: "photo", photoError: "Upload one photo at a time." } });
    expect(await db("attachments").count("* as n").first()).toEqual({ n: 0 });
  });
});
