import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { listYards } from "~/models/customers.server";
import type { YardBookingState } from "~/models/yard-booking-state.server";
import { countYardsByMapGroup, yardsWithBookingState, type YardMapGroup } from "~/models/yard-map.server";
import { loader } from "~/routes/dispatch/map";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { sessionStorage } from "~/services/session.server";
import { resetDatabase } from "./reset-database";

// One yard in each booking state, a few that test which state wins when more than one
// applies, and two yards neither view lists. The yards table and the dispatcher's map
// must tell the same story about every yard. Dates are counted from the business's real
// today, because the map's loader reads the clock.

let today = "";
let dispatcherId = 0;
const yards: Record<string, number> = {};

/** The state each named yard is built to be in. */
const BUILT: Record<string, YardBookingState> = {
  "Scheduled ahead": "booked",
  "Requested and scheduled": "booked",
  "Request waiting": "requested",
  "Course with a request": "requested",
  "Round two not made": "in_course",
  "Round two deferred": "in_course",
  "Served last year": "not_booked",
  "Cancelled only": "not_booked",
  "Stale request": "not_booked",
  "Never booked": "never_booked",
};

async function insertId(table: string, row: Record<string, unknown>): Promise<number> {
  const [inserted] = await db(table).insert(row).returning("id");
  return inserted.id;
}

beforeAll(async () => {
  await resetDatabase(db);
  today = await businessToday(db);
  const day = (n: number) => addCalendarDays(today, n);
  dispatcherId = await insertId("users", { email: "dispatch@example.test", password_hash: "x", role: "dispatcher", name: "Dispatcher" });
  const customer = await insertId("customers", { name: "Hazel Hollis", email: "hazel@example.test", city: "Dryden" });
  for (const [i, name] of Object.keys(BUILT).entries()) {
    yards[name] = await insertId("yards", { customer_id: customer, name, lat: 42.4 + i / 100, lng: -76.4, colony_count: 4 });
  }

  const booking = (yard: string, date: string, status: "requested" | "confirmed" | "cancelled" | "completed") =>
    insertId("bookings", { customer_id: customer, yard_id: yards[yard], service_date: date, colonies: 4, status });
  const course = (yard: string, status: "active" | "complete" | "cancelled", bookingId: number | null = null) =>
    insertId("courses", { yard_id: yards[yard], booking_id: bookingId, brood_status: "brood", rounds_planned: 3, interval_days: 7, status });
  const visit = (courseId: number, yard: string, round: number, date: string, status: "scheduled" | "deferred" | "in_progress" | "done" | "cancelled") =>
    db("visits").insert({ course_id: courseId, yard_id: yards[yard], round_number: round, service_date: date, status, colonies_expected: 4 });

  // Booked: a confirmed booking whose first round is scheduled ahead.
  await visit(await course("Scheduled ahead", "active", await booking("Scheduled ahead", day(3), "confirmed")), "Scheduled ahead", 1, day(3), "scheduled");
  // A scheduled visit outranks a request for another day.
  await visit(await course("Requested and scheduled", "active"), "Requested and scheduled", 1, day(2), "scheduled");
  await booking("Requested and scheduled", day(9), "requested");
  // Requested: the customer asked, the office has not confirmed.
  await booking("Request waiting", day(5), "requested");
  // A request for the next round outranks the course waiting for it.
  const withRequest = await course("Course with a request", "active");
  await visit(withRequest, "Course with a request", 1, day(-7), "done");
  await booking("Course with a request", day(4), "requested");
  // In course: round 1 done, round 2 has no visit at all.
  await visit(await course("Round two not made", "active"), "Round two not made", 1, day(-7), "done");
  // In course: round 2's visit was deferred (no room that day), so it is not booked.
  const deferred = await course("Round two deferred", "active");
  await visit(deferred, "Round two deferred", 1, day(-7), "done");
  await visit(deferred, "Round two deferred", 2, day(1), "deferred");
  // Not booked: served before, nothing ahead; a cancelled booking only; a request whose day has passed.
  const lastYear = await course("Served last year", "complete", await booking("Served last year", day(-300), "completed"));
  await visit(lastYear, "Served last year", 1, day(-300), "done");
  await booking("Cancelled only", day(6), "cancelled");
  await booking("Stale request", day(-2), "requested");

  // Neither view lists an archived yard or the yard of a deleted (anonymised) customer.
  await db("yards").insert({ customer_id: customer, name: "Archived", lat: 42, lng: -76, colony_count: 4, archived_at: new Date() });
  const gone = await insertId("customers", { name: "Deleted customer", email: "gone@example.test", anonymised_at: new Date() });
  await db("yards").insert({ customer_id: gone, name: "Gone yard", lat: 42, lng: -76, colony_count: 4 });
});

afterAll(() => db.destroy());

const GROUP_OF: Record<YardBookingState, YardMapGroup> = {
  booked: "booked",
  requested: "requested",
  in_course: "in-course",
  not_booked: "never",
  never_booked: "never",
};

describe("a yard's booking state", () => {
  it("is the same in the yards table and on the map, for every yard", async () => {
    const table = (await listYards(db, { today, pageSize: 100 })).rows;
    const map = await yardsWithBookingState(db, today);
    const byName = (rows: { name: string; id: number }[]) => rows.map((r) => [r.name, r.id]).sort();
    expect(byName(map)).toEqual(byName(table));
    expect(Object.fromEntries(table.map((r) => [r.name, r.bookingState]))).toEqual(BUILT);
    for (const row of table) {
      const pin = map.find((y) => y.id === row.id)!;
      expect({ name: pin.name, state: pin.state, group: pin.group, next: pin.nextVisitDate, requested: pin.requestedDate }).toEqual({
        name: row.name,
        state: row.bookingState,
        group: GROUP_OF[row.bookingState],
        next: row.nextVisitDate,
        requested: row.requestedDate,
      });
    }
  });

  it("carries the day that goes with it", async () => {
    const map = await yardsWithBookingState(db, today);
    const pin = (name: string) => map.find((y) => y.name === name)!;
    expect(pin("Scheduled ahead")).toMatchObject({ nextVisitDate: addCalendarDays(today, 3), requestedDate: null });
    expect(pin("Requested and scheduled")).toMatchObject({ nextVisitDate: addCalendarDays(today, 2), requestedDate: addCalendarDays(today, 9) });
    expect(pin("Request waiting")).toMatchObject({ nextVisitDate: null, requestedDate: addCalendarDays(today, 5) });
    expect(pin("Round two deferred")).toMatchObject({ nextVisitDate: null, requestedDate: null });
    expect(pin("Stale request")).toMatchObject({ nextVisitDate: null, requestedDate: null });
  });

  it("counts the map's four groups, the same as the table's states", async () => {
    const counts = countYardsByMapGroup(await yardsWithBookingState(db, today));
    expect(counts).toEqual({ booked: 2, requested: 2, "in-course": 2, never: 4 });
    const tableCount = async (state: YardBookingState) => (await listYards(db, { today, state })).total;
    expect(counts.requested).toBe(await tableCount("requested"));
    expect(counts["in-course"]).toBe(await tableCount("in_course"));
    expect(counts.never).toBe((await tableCount("not_booked")) + (await tableCount("never_booked")));
  });
});

describe("the map's ?state= filter", () => {
  async function load(query: string) {
    const session = await sessionStorage().getSession();
    session.set("userId", String(dispatcherId));
    const cookie = (await sessionStorage().commitSession(session)).split(";")[0];
    const request = new Request(`http://localhost/dispatch/map${query}`, { headers: { Cookie: cookie } });
    return loader({ request, params: {}, context: {} } as never);
  }
  const names = (rows: { name: string }[]) => rows.map((r) => r.name).sort();
  const builtIn = (...states: YardBookingState[]) => Object.keys(BUILT).filter((name) => states.includes(BUILT[name])).sort();

  it("shows only the yards waiting for the office under ?state=requested", async () => {
    const page = await load("?state=requested");
    expect(page.filter).toBe("requested");
    expect(names(page.yards)).toEqual(builtIn("requested"));
    expect(page.total).toBe(Object.keys(BUILT).length);
  });

  it("keeps the old keys: in-course, never and booked", async () => {
    expect(names((await load("?state=in-course")).yards)).toEqual(builtIn("in_course"));
    expect(names((await load("?state=never")).yards)).toEqual(builtIn("not_booked", "never_booked"));
    expect(names((await load("?state=booked")).yards)).toEqual(builtIn("booked"));
  });

  it("shows every yard for no filter or one it does not know", async () => {
    for (const query of ["", "?state=bogus", "?state=in_course"]) {
      const page = await load(query);
      expect(page.filter).toBeNull();
      expect(names(page.yards)).toEqual(Object.keys(BUILT).sort());
    }
  });
});
