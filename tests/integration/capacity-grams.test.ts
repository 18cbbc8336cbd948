import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { yardSchema, type YardInput } from "~/forms/yard";
import { bookYards, BookingRefused } from "~/models/bookings.server";
import { roomBetween } from "~/models/capacity.server";
import { rescheduleVisit, VisitChangeRefused } from "~/models/visit-changes.server";
import { updateYard, YardEditRefused } from "~/models/yard-edit.server";
import { action as bookAction } from "~/routes/portal/book";
import { action as portalEditAction } from "~/routes/portal/yard-edit";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { sessionStorage } from "~/services/session.server";
import { resetDatabase } from "./reset-database";

// A crew's daily gram limit holds exactly, by the dose each yard's colonies really take
// (box type's rate × brood boxes per colony), not at one deep brood box per colony.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

const settings = defaultBusinessSettings; // 1 g per deep box, 0.7 g per medium box
const today = dateInZone(new Date(), settings.timeZone);
const day = addCalendarDays(today, 10);

async function aCrew(maxGrams: number | null) {
  await db("crews").insert({
    name: `Crew ${Math.random().toString(36).slice(2, 6)}`,
    start_label: "Shop",
    start_lat: 42.44,
    start_lng: -76.5,
    work_start: "08:00",
    work_end: "17:00",
    vaporizers: 2,
    working_weekdays: [1, 2, 3, 4, 5, 6, 7],
    max_dose_grams_per_day: maxGrams,
  });
}

type Shape = { colonies: number; boxType: "deep" | "medium" | "nuc"; boxes: number };
type Customer = { userId: number; customerId: number; yardId: number };

async function aCustomerWithYard(shape: Shape): Promise<Customer> {
  const tag = Math.random().toString(36).slice(2);
  const [user] = await db("users").insert({ email: `c${tag}@example.test`, password_hash: "x", role: "customer", name: "C" }).returning("id");
  const [customer] = await db("customers").insert({ user_id: user.id, name: `C ${tag}`, email: `c${tag}@example.test` }).returning("id");
  const [yard] = await db("yards")
    .insert({ customer_id: customer.id, name: `Yard ${tag}`, lat: 42.4, lng: -76.4, colony_count: shape.colonies, box_type: shape.boxType, brood_boxes_per_colony: shape.boxes, brood_status: "broodless" })
    .returning("id");
  return { userId: Number(user.id), customerId: Number(customer.id), yardId: Number(yard.id) };
}

async function book(c: Customer, date = day) {
  return bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yardId], serviceDate: date, timePreference: "any", notes: null });
}

async function aBookedYard(shape: Shape, date = day): Promise<Customer> {
  const c = await aCustomerWithYard(shape);
  await book(c, date);
  return c;
}

async function cookieFor(userId: number): Promise<string> {
  const session = await sessionStorage().getSession();
  session.set("userId", String(userId));
  return (await sessionStorage().commitSession(session)).split(";")[0];
}

type ActionAnswer = { status: number; body: unknown; location: string | null };

async function callAction(action: (args: never) => unknown, url: string, userId: number, params: Record<string, string>, fields: [string, string][]): Promise<ActionAnswer> {
  const headers = new Headers({ Cookie: await cookieFor(userId), "Content-Type": "application/x-www-form-urlencoded" });
  const request = new Request(`http://127.0.0.1${url}`, { method: "POST", headers, body: new URLSearchParams(fields).toString() });
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

function bookForm(c: Customer, date = day): [string, string][] {
  return [
    ["yardIds", String(c.yardId)],
    ["serviceDate", date],
    ["timePreference", "any"],
    ["notes", ""],
  ];
}

function yardInput(shape: Shape): YardInput {
  return yardSchema.parse({ name: "Orchard", lat: "42.45", lng: "-76.48", colonyCount: String(shape.colonies), broodBoxesPerColony: String(shape.boxes), boxType: shape.boxType, broodStatus: "broodless", supersOff: "on", accessNotes: "" });
}

describe("a crew's daily gram limit in the booking capacity", () => {
  it("refuses a booking that fits in colonies but not in grams, at the day field, and takes one that fits", async () => {
    await aCrew(20);
    // 10 colonies of 2 medium boxes: 10 × 2 × 0.7 g = 14 g.
    await aBookedYard({ colonies: 10, boxType: "medium", boxes: 2 });
    const [room] = await roomBetween(db, settings, day, day);
    expect(room).toMatchObject({ booked: 10, gramsCapacity: 20, gramsBooked: 14, gramsRemaining: 6 });
    // The colony figure still has room for 6 more colonies (20 g over the least dose is far more)…
    expect(room.remaining).toBeGreaterThanOrEqual(6);

    // …but 6 colonies of 2 medium boxes take 8.4 g, and only 6 g are left.
    const tooMuch = await aCustomerWithYard({ colonies: 6, boxType: "medium", boxes: 2 });
    const answer = await callAction(bookAction, "/portal/book", tooMuch.userId, {}, bookForm(tooMuch));
    expect(answer.status).toBe(409);
    const body = answer.body as { errors: Record<string, string> };
    expect(Object.keys(body.errors)).toEqual(["serviceDate"]);
    expect(body.errors.serviceDate).toBe("That day's crews can apply 6 g more; this yard needs 8.4 g. Choose another day or fewer yards.");
    await expect(book(tooMuch)).rejects.toBeInstanceOf(BookingRefused);
    expect(await db("visits").where({ yard_id: tooMuch.yardId }).count("* as n").first()).toEqual({ n: 0 });

    // 4 colonies of 2 medium boxes take 5.6 g: taken.
    const fits = await aCustomerWithYard({ colonies: 4, boxType: "medium", boxes: 2 });
    const taken = await callAction(bookAction, "/portal/book", fits.userId, {}, bookForm(fits));
    expect(taken).toMatchObject({ status: 302, location: `/portal/bookings?booked=${day}` });
    expect((await roomBetween(db, settings, day, day))[0]).toMatchObject({ booked: 14, gramsBooked: 19.6, gramsRemaining: 0.4 });
  });

  it("does not bind grams on a day one working crew has no gram limit", async () => {
    await aCrew(5);
    await aCrew(null);
    const c = await aBookedYard({ colonies: 10, boxType: "medium", boxes: 2 });
    expect((await roomBetween(db, settings, day, day))[0]).toMatchObject({ gramsCapacity: null, gramsBooked: 14, gramsRemaining: null });
    expect(await db("visits").where({ yard_id: c.yardId }).count("* as n").first()).toEqual({ n: 1 });
  });

  it("refuses a box change on a booked visit that the crews' grams cannot take, at the box-type field", async () => {
    await aCrew(20);
    const ours = await aBookedYard({ colonies: 10, boxType: "deep", boxes: 1 }); // 10 g
    await aBookedYard({ colonies: 8, boxType: "deep", boxes: 1 }); // 8 g: 2 g left
    // 10 colonies of 2 medium boxes take 14 g: 4 g more than now.
    const answer = await callAction(portalEditAction, `/portal/yards/${ours.yardId}/edit`, ours.userId, { yardId: String(ours.yardId) }, [
      ["intent", "save"],
      ["name", "Orchard"],
      ["lat", "42.45"],
      ["lng", "-76.48"],
      ["colonyCount", "10"],
      ["broodBoxesPerColony", "2"],
      ["boxType", "medium"],
      ["broodStatus", "broodless"],
      ["supersOff", "on"],
      ["accessNotes", ""],
    ]);
    expect(answer.status).toBe(409);
    const errors = (answer.body as { errors: Record<string, string> }).errors;
    expect(Object.keys(errors)).toEqual(["boxType"]);
    expect(errors.boxType).toContain(`${day} (its crews can apply 2 g more; this yard needs 4 g more)`);
    // (10 g now + 2 g left) ÷ 1.4 g a colony: 8 colonies.
    expect(errors.boxType).toMatch(/at most 8 for now/);
    expect(await db("yards").where({ id: ours.yardId }).first("box_type", "brood_boxes_per_colony")).toEqual({ box_type: "deep", brood_boxes_per_colony: 1 });

    // What the message offers fits: 8 colonies × 1.4 g = 11.2 g.
    expect(await updateYard(db, ours.customerId, ours.yardId, yardInput({ colonies: 8, boxType: "medium", boxes: 2 }), ours.userId)).toBe(true);
    expect((await roomBetween(db, settings, day, day))[0]).toMatchObject({ gramsBooked: 19.2, gramsRemaining: 0.8 });
    // And a raise beyond the grams is refused at the colony count.
    await expect(updateYard(db, ours.customerId, ours.yardId, yardInput({ colonies: 9, boxType: "medium", boxes: 2 }), ours.userId)).rejects.toMatchObject({
      constructor: YardEditRefused,
      field: "colonyCount",
    });
  });

  it("counts a yard edit's added grams from the colonies as the crew found them, not the yard's old figure", async () => {
    await aCrew(20);
    // On record 2 deep boxes a colony, but the crew found 1 in each of the 4 colonies: the day
    // counts 4 × 1 g = 4 g for this yard.
    const ours = await aCustomerWithYard({ colonies: 4, boxType: "deep", boxes: 2 });
    await db("colonies").insert(["H1", "H2", "H3", "H4"].map((label) => ({ yard_id: ours.yardId, label, brood_boxes: 1, box_type: "deep", brood_status: "broodless", active: true })));
    await book(ours);
    await aBookedYard({ colonies: 14, boxType: "deep", boxes: 1 }); // 14 g: 18 g booked, 2 g left
    expect((await roomBetween(db, settings, day, day))[0]).toMatchObject({ gramsBooked: 18, gramsRemaining: 2 });
    // Saving the yard as 4 colonies of 3 boxes sets every colony to 3 boxes: 12 g, 8 g more
    // than the day counts now, and only 2 g are left.
    await expect(updateYard(db, ours.customerId, ours.yardId, yardInput({ colonies: 4, boxType: "deep", boxes: 3 }), ours.userId)).rejects.toMatchObject({
      constructor: YardEditRefused,
      field: "broodBoxesPerColony",
    });
    expect((await roomBetween(db, settings, day, day))[0]).toMatchObject({ gramsBooked: 18, gramsRemaining: 2 });
    expect(await db("colonies").where({ yard_id: ours.yardId }).orderBy("label").pluck("brood_boxes")).toEqual([1, 1, 1, 1]);
    expect(await db("yards").where({ id: ours.yardId }).first("brood_boxes_per_colony")).toEqual({ brood_boxes_per_colony: 2 });
  });

  it("keeps what the crew found when an edit leaves the yard's boxes as they were, and gives an added colony the yard's figures", async () => {
    await aCrew(20);
    // On record 2 deep boxes a colony; the crew found 1 in each of the 4 colonies (4 g counted).
    const ours = await aCustomerWithYard({ colonies: 4, boxType: "deep", boxes: 2 });
    await db("colonies").insert(["H1", "H2", "H3", "H4"].map((label) => ({ yard_id: ours.yardId, label, brood_boxes: 1, box_type: "deep", brood_status: "broodless", active: true })));
    await book(ours);
    await aBookedYard({ colonies: 14, boxType: "deep", boxes: 1 }); // 18 g booked, 2 g left
    // A fifth colony at the yard's 2 boxes: 4 × 1 g + 2 g = 6 g, 2 g more: it just fits.
    expect(await updateYard(db, ours.customerId, ours.yardId, yardInput({ colonies: 5, boxType: "deep", boxes: 2 }), ours.userId)).toBe(true);
    expect(await db("colonies").where({ yard_id: ours.yardId, active: true }).orderBy("label").select("label", "brood_boxes")).toEqual([
      { label: "H1", brood_boxes: 1 },
      { label: "H2", brood_boxes: 1 },
      { label: "H3", brood_boxes: 1 },
      { label: "H4", brood_boxes: 1 },
      { label: "H5", brood_boxes: 2 },
    ]);
    // (4 × 1 g + 2 g) ÷ 5 = 1.2 g a colony, × 5 = 6 g: 20 g booked, none left.
    expect((await roomBetween(db, settings, day, day))[0]).toMatchObject({ gramsBooked: 20, gramsRemaining: 0 });
    // A sixth at 2 boxes is about 2 g more and no gram is left: refused at the colony count, nothing written.
    await expect(updateYard(db, ours.customerId, ours.yardId, yardInput({ colonies: 6, boxType: "deep", boxes: 2 }), ours.userId)).rejects.toMatchObject({
      constructor: YardEditRefused,
      field: "colonyCount",
    });
    expect(await db("colonies").where({ yard_id: ours.yardId, active: true }).count({ n: "*" }).first()).toEqual({ n: 5 });
  });

  it("refuses moving a visit to a day whose crews' grams it does not fit", async () => {
    await aCrew(20);
    const dispatcher = await db("users").insert({ email: `d${Math.random().toString(36).slice(2)}@example.test`, password_hash: "x", role: "dispatcher", name: "D" }).returning("id");
    const later = addCalendarDays(day, 1);
    await aBookedYard({ colonies: 10, boxType: "medium", boxes: 2 }, later); // 14 g of 20 on `later`
    const moving = await aBookedYard({ colonies: 6, boxType: "medium", boxes: 2 }); // 8.4 g
    const visit = await db("visits").where({ yard_id: moving.yardId }).first("id");
    const refusal = await rescheduleVisit(db, { visitId: Number(visit!.id), toDate: later, reason: null, actorUserId: Number(dispatcher[0].id) }).then(
      () => null,
      (e: unknown) => e,
    );
    expect(refusal).toBeInstanceOf(VisitChangeRefused);
    expect(refusal).toMatchObject({ field: "toDate", message: "That day's crews can apply 6 g more; this visit needs 8.4 g. Choose another day." });
    expect(await db("visits").where({ id: visit!.id }).first("service_date")).toEqual({ service_date: day });
  });
});
