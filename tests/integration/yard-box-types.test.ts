import { afterAll, beforeEach, describe, expect, it } from "vitest";
import type { BoxType } from "~/domain/box-types";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { yardSchema } from "~/forms/yard";
import { dayPlanningData, planServiceDay } from "~/models/day-plan.server";
import { yardPageData } from "~/models/yard-plan.server";
import { getYard } from "~/models/yards.server";
import { action as dispatchEditAction } from "~/routes/dispatch/yard-edit";
import { action as portalNewAction } from "~/routes/portal/yard-new";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { sessionStorage } from "~/services/session.server";
import { resetDatabase } from "./reset-database";

// A yard's brood box type sets the dose rate of its colonies (a medium or a nuc takes less
// than a deep), and a dose above one vaporizer load takes more time at the yard.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

const today = dateInZone(new Date(), defaultBusinessSettings.timeZone);
const day = addCalendarDays(today, 10);
const travel = { osrmUrl: null }; // the built-in estimate, whatever the environment says

let seq = 0;
async function aUser(role: "customer" | "dispatcher" | "crew") {
  seq++;
  const [user] = await db("users")
    .insert({ email: `${role}${seq}.${Math.random().toString(36).slice(2, 8)}@example.test`, password_hash: "x", role, name: `${role} ${seq}` })
    .returning("id");
  return Number(user.id);
}

async function aCustomer() {
  const userId = await aUser("customer");
  const [customer] = await db("customers").insert({ user_id: userId, name: `Customer ${seq}`, email: `cust${seq}.${Math.random().toString(36).slice(2, 8)}@example.test` }).returning("id");
  return { userId, customerId: Number(customer.id) };
}

async function cookieFor(userId: number): Promise<string> {
  const session = await sessionStorage().getSession();
  session.set("userId", String(userId));
  return (await sessionStorage().commitSession(session)).split(";")[0];
}

type ActionAnswer = { status: number; body: unknown; location: string | null };

/** Calls a route action as the router would, and returns what it answered or threw. */
async function callAction(action: (args: never) => unknown, url: string, userId: number, params: Record<string, string>, fields: Record<string, string>): Promise<ActionAnswer> {
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

function yardFields(overrides: Record<string, string> = {}): Record<string, string> {
  return { intent: "save", name: "Orchard", lat: "42.45", lng: "-76.48", colonyCount: "3", broodBoxesPerColony: "2", boxType: "medium", broodStatus: "broodless", supersOff: "on", accessNotes: "", ...overrides };
}

describe("a yard's brood box type", () => {
  it("saves a medium yard from the customer's form onto the yard and its colonies, and plans 0.7 g a box", async () => {
    const { userId, customerId } = await aCustomer();
    const answer = await callAction(portalNewAction, "/portal/yards/new", userId, {}, yardFields());
    expect(answer.status).toBe(302);
    const yardRow = await db("yards").where({ customer_id: customerId }).first("id", "box_type");
    expect(yardRow?.box_type).toBe("medium");
    const colonies = await db("colonies").where({ yard_id: yardRow!.id }).select("box_type", "brood_boxes");
    expect(colonies).toHaveLength(3);
    expect(colonies.every((c) => c.box_type === "medium" && c.brood_boxes === 2)).toBe(true);

    const page = await yardPageData(db, await getYard(db, String(yardRow!.id), today));
    expect(page.yard.boxType).toBe("medium");
    // common practice: a medium box takes about 0.7 g where a deep takes 1 g (the default rates)
    expect(page.plan.doseRateGrams).toBe(0.7);
    expect(page.doseRate).toBe(0.7);
    expect(page.plan.dosePerColonyGrams).toBe(1.4);
    expect(page.plan.dosePerRoundGrams).toBe(4.2);
    expect(page.plan).toMatchObject({ boxType: "medium", broodBoxesPerColony: 2, loadsPerColony: 1 });
  });

  it("lets the dispatcher change a deep yard to nuc, and its colonies follow", async () => {
    const { userId, customerId } = await aCustomer();
    await callAction(portalNewAction, "/portal/yards/new", userId, {}, yardFields({ boxType: "deep", broodBoxesPerColony: "1" }));
    const yardRow = await db("yards").where({ customer_id: customerId }).first("id", "box_type");
    expect(yardRow?.box_type).toBe("deep");
    const dispatcher = await aUser("dispatcher");
    const answer = await callAction(dispatchEditAction, `/dispatch/yards/${yardRow!.id}/edit`, dispatcher, { yardId: String(yardRow!.id) }, yardFields({ boxType: "nuc", broodBoxesPerColony: "1" }));
    expect(answer.status).toBe(302);
    expect((await db("yards").where({ id: yardRow!.id }).first("box_type"))?.box_type).toBe("nuc");
    const types = await db("colonies").where({ yard_id: yardRow!.id, active: true }).pluck("box_type");
    expect(types).toEqual(["nuc", "nuc", "nuc"]);
  });

  it("refuses an unknown box type at its field and saves nothing", async () => {
    const { userId, customerId } = await aCustomer();
    const answer = await callAction(portalNewAction, "/portal/yards/new", userId, {}, yardFields({ boxType: "langstroth-jumbo" }));
    expect(answer.status).toBe(400);
    const body = answer.body as { errors: Record<string, string>; values: Record<string, string> };
    expect(body.errors.boxType).toMatch(/brood box type/);
    expect(Object.keys(body.errors)).toEqual(["boxType"]);
    expect(body.values.boxType).toBe("langstroth-jumbo"); // the user's input is kept
    expect(await db("yards").where({ customer_id: customerId }).pluck("id")).toEqual([]);
    // An empty choice is refused too; only a form that leaves the field out gets a deep.
    expect(yardSchema.safeParse(yardFields({ boxType: "" })).success).toBe(false);
    const { boxType: _left, ...older } = yardFields();
    expect(yardSchema.parse(older).boxType).toBe("deep");
  });
});

describe("the day planner and box types", () => {
  async function aBookedYard(name: string, boxType: BoxType, broodBoxes: number, colonies: number, lat: number) {
    const { customerId } = await aCustomer();
    const [yard] = await db("yards")
      .insert({ customer_id: customerId, name, lat, lng: -76.48, colony_count: colonies, brood_boxes_per_colony: broodBoxes, box_type: boxType, brood_status: "broodless" })
      .returning("id");
    const [booking] = await db("bookings").insert({ customer_id: customerId, yard_id: yard.id, service_date: day, time_preference: "any", colonies }).returning("id");
    const [course] = await db("courses").insert({ yard_id: yard.id, booking_id: booking.id, brood_status: "broodless", rounds_planned: 1, interval_days: 0 }).returning("id");
    const [visit] = await db("visits")
      .insert({ course_id: course.id, yard_id: yard.id, round_number: 1, service_date: day, time_preference: "any", colonies_expected: colonies })
      .returning("id");
    return Number(visit.id);
  }

  it("gives a visit the grams of its box type, and more minutes when a colony needs two vaporizer loads", async () => {
    const dispatcher = await aUser("dispatcher");
    await db("crews").insert({ name: "Crew A", start_label: "Shop", start_lat: 42.44, start_lng: -76.5, work_start: "08:00", work_end: "17:00", vaporizers: 1 });
    // Default rates: medium 0.7 g a box, loads of at most 2 g. 2 mediums = 1.4 g, one load;
    // 3 mediums = 2.1 g, two loads.
    const oneLoad = await aBookedYard("Two mediums", "medium", 2, 6, 42.45);
    const twoLoads = await aBookedYard("Three mediums", "medium", 3, 6, 42.46);
    await planServiceDay(db, { date: day, actorUserId: dispatcher, keepLocked: false, travel });

    const data = await dayPlanningData(db, day);
    const visit = (id: number) => data.visits.find((v) => v.visitId === id)!;
    expect(visit(oneLoad)).toMatchObject({ boxType: "medium", loadsPerColony: 1, grams: 8.4 });
    expect(visit(twoLoads)).toMatchObject({ boxType: "medium", loadsPerColony: 2, grams: 12.6 });

    const minutesAt = (id: number) => {
      const stop = visit(id).stop!;
      return (stop.leaveAt.getTime() - stop.startAt.getTime()) / 60_000;
    };
    // Default times (35 s a dose, gap max(2 min move, 60 s reheat) = 2 min, 15 min set-up,
    // 10 min entrance), one vaporizer, 6 colonies:
    // one load each, 6 cycles: 15 + 6 × 35/60 + 5 × 2 + 10 = 15 + 3.5 + 10 + 10 = 38.5 min;
    // two loads each, 12 cycles: 15 + 12 × 35/60 + 11 × 2 + 10 = 15 + 7 + 22 + 10 = 54 min.
    expect(Math.abs(minutesAt(oneLoad) - 38.5)).toBeLessThan(1);
    expect(Math.abs(minutesAt(twoLoads) - 54)).toBeLessThan(1);
    expect(minutesAt(twoLoads)).toBeGreaterThan(minutesAt(oneLoad));
  });
});
