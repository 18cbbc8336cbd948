import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { listCustomers, listYards } from "~/models/customers.server";
import { db } from "~/services/db.server";
import { resetDatabase } from "./reset-database";

// A small, fully controlled book of customers: 62 current customers (one anonymised and
// one archived yard that must not count), invoices in every state with part payments and a
// refund, visits ahead and behind, courses and bookings for every booking state.

const TODAY = "2026-11-10";
const TOWNS = ["Dryden", "Groton", "Trumansburg", "Lansing"];
const FIRST = ["Ada", "Bram", "Cora", "Dov", "Esme", "Finn", "Gale", "Hugo", "Iris", "Jude", "Kit", "Lark", "Milo", "Nell", "Otto", "Pia"];
const LAST = ["Applegarth", "Birchwood", "Combe", "Drummond"];

type Ids = { customers: number[]; yards: Record<string, number> };
const ids: Ids = { customers: [], yards: {} };

async function insertId(table: string, row: Record<string, unknown>): Promise<number> {
  const [inserted] = await db(table).insert(row).returning("id");
  return inserted.id;
}

beforeAll(async () => {
  await resetDatabase(db);
  for (let i = 0; i < 62; i++) {
    const name = `${FIRST[i % FIRST.length]} ${LAST[Math.floor(i / FIRST.length) % LAST.length]}`;
    const id = await insertId("customers", {
      name: i === 61 ? "Percy 100% Pure_Honey" : name,
      email: `keeper${String(i).padStart(2, "0")}@example.com`,
      phone: i % 5 === 0 ? null : `(607) 555-${String(100 + i).padStart(4, "0")}`,
      city: TOWNS[i % TOWNS.length],
    });
    ids.customers.push(id);
    for (let y = 0; y < i % 4; y++) {
      const yardId = await insertId("yards", {
        customer_id: id,
        name: y === 0 ? "Home yard" : `Out yard ${i}-${y}`,
        lat: 42.4 + i / 1000,
        lng: -76.4,
        colony_count: ((i * 7 + y * 3) % 12) + 1,
        brood_status: ["brood", "broodless", "unknown"][(i + y) % 3],
        supers_off: (i + y) % 3 !== 0,
      });
      ids.yards[`${i}-${y}`] = yardId;
    }
  }
  // An archived yard and an anonymised customer never count.
  await db("yards").insert({ customer_id: ids.customers[3], name: "Archived yard", lat: 42, lng: -76, colony_count: 50, archived_at: new Date() });
  const gone = await insertId("customers", { name: "Ada Anonymous", email: "gone@example.com", city: "Dryden", anonymised_at: new Date() });
  await db("yards").insert({ customer_id: gone, name: "Home yard", lat: 42, lng: -76, colony_count: 9 });

  // Money: open invoices, part paid, one payment part refunded; paid and void ones do not count.
  let seq = 0;
  const invoice = async (customer: number, status: "open" | "paid" | "void", total: number) =>
    insertId("invoices", {
      year: 2026,
      sequence: ++seq,
      number: `2026-${String(seq).padStart(4, "0")}`,
      customer_id: customer,
      status,
      issued_on: "2026-10-01",
      due_on: "2026-10-31",
      subtotal_cents: total,
      tax_cents: 0,
      total_cents: total,
    });
  for (let i = 0; i < 62; i += 3) {
    const open = await invoice(ids.customers[i], "open", 5000 + i * 100);
    if (i % 2 === 0) await db("payments").insert({ invoice_id: open, amount_cents: 1000, method: "cash" });
    if (i % 9 === 0) {
      const [payment] = await db("payments").insert({ invoice_id: open, amount_cents: 2000, method: "card" }).returning("id");
      await db("refunds").insert({ payment_id: payment.id, amount_cents: 500, reason: "Overcharged one colony" });
    }
    await invoice(ids.customers[i], "paid", 9999);
    await invoice(ids.customers[i], "void", 7777);
  }

  // Booking states, on the yards of customers 1, 2, 3, 5 and 6.
  const course = async (yard: number, status: "active" | "complete" | "cancelled", booking: number | null = null) =>
    insertId("courses", { yard_id: yard, booking_id: booking, brood_status: "brood", rounds_planned: 3, interval_days: 7, status });
  const visit = async (courseId: number, yard: number, round: number, date: string, status: "scheduled" | "deferred" | "in_progress" | "done" | "cancelled") =>
    db("visits").insert({ course_id: courseId, yard_id: yard, round_number: round, service_date: date, status, colonies_expected: 3 });
  const booking = async (customer: number, yard: number, date: string, status: "requested" | "confirmed" | "cancelled" | "completed") =>
    insertId("bookings", { customer_id: customer, yard_id: yard, service_date: date, colonies: 3, status });

  // 1-0: booked (scheduled round 2 ahead) — also customer 1's next visit.
  const c10 = await course(ids.yards["1-0"], "active", await booking(ids.customers[1], ids.yards["1-0"], "2026-11-03", "confirmed"));
  await visit(c10, ids.yards["1-0"], 1, "2026-11-03", "done");
  await visit(c10, ids.yards["1-0"], 2, "2026-11-17", "scheduled");
  // 2-0: in course, next round deferred (not booked); 2-1: requested for later.
  const c20 = await course(ids.yards["2-0"], "active");
  await visit(c20, ids.yards["2-0"], 1, "2026-11-02", "done");
  await visit(c20, ids.yards["2-0"], 2, "2026-11-12", "deferred");
  await booking(ids.customers[2], ids.yards["2-1"], "2026-11-20", "requested");
  // 3-0: served before, nothing ahead; 3-1: booked on two days (the earlier is the next visit); 3-2: only a cancelled booking.
  const c30 = await course(ids.yards["3-0"], "complete");
  await visit(c30, ids.yards["3-0"], 1, "2026-10-20", "done");
  const c31 = await course(ids.yards["3-1"], "active");
  await visit(c31, ids.yards["3-1"], 1, "2026-11-24", "scheduled");
  await visit(c31, ids.yards["3-1"], 2, TODAY, "in_progress");
  await booking(ids.customers[3], ids.yards["3-2"], "2026-11-30", "cancelled");
  // 5-0: a scheduled visit in the past does not count as ahead; a cancelled one ahead neither.
  const c50 = await course(ids.yards["5-0"], "active");
  await visit(c50, ids.yards["5-0"], 1, "2026-11-01", "scheduled");
  await visit(c50, ids.yards["5-0"], 2, "2026-11-15", "cancelled");
});

afterAll(() => db.destroy());

/** Customers as an independent query sees them (current ones only), for expectations. */
async function independentCustomers() {
  const rows = await db.raw(`
    select c.id, c.name, c.email, c.phone, c.city,
      (select count(*) from yards y where y.customer_id = c.id and y.archived_at is null)::int as yards,
      (select coalesce(sum(colony_count), 0) from yards y where y.customer_id = c.id and y.archived_at is null)::int as colonies,
      ((select coalesce(sum(total_cents), 0) from invoices i where i.customer_id = c.id and i.status = 'open')
        - (select coalesce(sum(p.amount_cents), 0) from payments p join invoices i on i.id = p.invoice_id where i.customer_id = c.id and i.status = 'open')
        + (select coalesce(sum(r.amount_cents), 0) from refunds r join payments p on p.id = r.payment_id join invoices i on i.id = p.invoice_id where i.customer_id = c.id and i.status = 'open'))::int as balance
    from customers c where c.anonymised_at is null order by c.id`);
  return rows.rows as { id: number; name: string; email: string; phone: string | null; city: string; yards: number; colonies: number; balance: number }[];
}

const byName = (a: string, b: string) => (a.toLowerCase() < b.toLowerCase() ? -1 : a.toLowerCase() > b.toLowerCase() ? 1 : 0);

describe("the customers table", () => {
  it("counts every current customer and totals their yards, colonies and open balance", async () => {
    const page = await listCustomers(db, { today: TODAY });
    const expected = await independentCustomers();
    expect(page.total).toBe(62);
    expect(page.totals).toEqual({
      yards: expected.reduce((s, c) => s + c.yards, 0),
      colonies: expected.reduce((s, c) => s + c.colonies, 0),
      openBalanceCents: expected.reduce((s, c) => s + c.balance, 0),
    });
    // Sums over the tables straight, as a second check of the same figures.
    const yards = await db.raw("select count(*)::int as n, sum(colony_count)::int as colonies from yards y join customers c on c.id = y.customer_id where y.archived_at is null and c.anonymised_at is null");
    expect(page.totals.yards).toBe(yards.rows[0].n);
    expect(page.totals.colonies).toBe(yards.rows[0].colonies);
    expect(page.totals.openBalanceCents).toBeGreaterThan(0);
  });

  it("gives each row its figures and its next visit", async () => {
    const page = await listCustomers(db, { today: TODAY, pageSize: 100 });
    const expected = await independentCustomers();
    for (const row of page.rows) {
      const e = expected.find((c) => c.id === row.id)!;
      expect([row.yards, row.colonies, row.openBalanceCents]).toEqual([e.yards, e.colonies, e.balance]);
    }
    const next = Object.fromEntries(page.rows.filter((r) => r.nextVisitDate).map((r) => [r.id, r.nextVisitDate]));
    expect(next).toEqual({ [ids.customers[1]]: "2026-11-17", [ids.customers[3]]: TODAY });
  });

  it("pages 25 at a time: page 2 is rows 26–50 and the last page holds the rest", async () => {
    const all = (await listCustomers(db, { today: TODAY, pageSize: 100 })).rows.map((r) => r.id);
    const second = await listCustomers(db, { today: TODAY, page: 2 });
    expect(second).toMatchObject({ page: 2, pageSize: 25, total: 62 });
    expect(second.rows.map((r) => r.id)).toEqual(all.slice(25, 50));
    const third = await listCustomers(db, { today: TODAY, page: 3 });
    expect(third.rows.map((r) => r.id)).toEqual(all.slice(50));
    // Past the end shows the last page; a page size not on offer falls back to 25.
    expect((await listCustomers(db, { today: TODAY, page: 99 })).page).toBe(3);
    expect((await listCustomers(db, { today: TODAY, pageSize: 7 })).rows).toHaveLength(25);
    // Totals are for the whole set, whichever page shows.
    expect(second.totals).toEqual(third.totals);
  });

  it("sorts by name both ways and by any whitelisted column", async () => {
    const asc = (await listCustomers(db, { today: TODAY, sort: "name", dir: "asc", pageSize: 100 })).rows.map((r) => r.name);
    expect(asc).toEqual([...asc].sort(byName));
    const desc = (await listCustomers(db, { today: TODAY, sort: "name", dir: "desc", pageSize: 100 })).rows.map((r) => r.name);
    expect(desc).toEqual([...asc].reverse());

    const balances = (await listCustomers(db, { today: TODAY, sort: "balance", dir: "desc", pageSize: 100 })).rows.map((r) => r.openBalanceCents);
    expect(balances).toEqual([...balances].sort((a, b) => b - a));
    const colonies = (await listCustomers(db, { today: TODAY, sort: "colonies", dir: "asc", pageSize: 100 })).rows.map((r) => r.colonies);
    expect(colonies).toEqual([...colonies].sort((a, b) => a - b));
    // Customers without a visit ahead come last either way.
    for (const dir of ["asc", "desc"] as const) {
      const next = (await listCustomers(db, { today: TODAY, sort: "nextVisit", dir })).rows.map((r) => r.nextVisitDate);
      expect(next.slice(0, 2)).toEqual(dir === "asc" ? [TODAY, "2026-11-17"] : ["2026-11-17", TODAY]);
      expect(next.slice(2).every((d) => d === null)).toBe(true);
    }
  });

  it("ignores a sort that is not on the whitelist", async () => {
    const page = await listCustomers(db, { today: TODAY, sort: "name; drop table customers", dir: "sideways" });
    expect(page).toMatchObject({ sort: "name", dir: "asc", total: 62 });
  });

  it("searches name, e-mail, phone, town and yard name, in any case", async () => {
    const expected = await independentCustomers();
    const search = async (text: string) => (await listCustomers(db, { today: TODAY, search: text, pageSize: 100 })).rows.map((r) => r.id).sort((a, b) => a - b);

    expect(await search("BRAM")).toEqual(expected.filter((c) => /bram/i.test(c.name)).map((c) => c.id));
    expect(await search("keeper07@")).toEqual([ids.customers[7]]);
    expect(await search("GROTON")).toEqual(expected.filter((c) => c.city === "Groton").map((c) => c.id));
    expect(await search("555-0112")).toEqual([ids.customers[12]]);
    expect(await search("6075550112")).toEqual([ids.customers[12]]);
    expect(await search("out yard 10-")).toEqual([ids.customers[10]]);
    // Wildcards are taken literally.
    expect(await search("100%")).toEqual([ids.customers[61]]);
    expect(await search("_")).toEqual([ids.customers[61]]);
    expect(await search("nobody like this")).toEqual([]);
    // The anonymised customer is never found.
    expect(await search("anonymous")).toEqual([]);
  });

  it("totals only what the search found", async () => {
    const page = await listCustomers(db, { today: TODAY, search: "groton" });
    const expected = (await independentCustomers()).filter((c) => c.city === "Groton");
    expect(page.total).toBe(expected.length);
    expect(page.totals).toEqual({
      yards: expected.reduce((s, c) => s + c.yards, 0),
      colonies: expected.reduce((s, c) => s + c.colonies, 0),
      openBalanceCents: expected.reduce((s, c) => s + c.balance, 0),
    });
  });
});

describe("the yards table", () => {
  it("shows where each yard stands with bookings", async () => {
    const page = await listYards(db, { today: TODAY, pageSize: 100 });
    const state = (key: string) => page.rows.find((r) => r.id === ids.yards[key]);
    expect(state("1-0")).toMatchObject({ bookingState: "booked", nextVisitDate: "2026-11-17" });
    expect(state("2-0")).toMatchObject({ bookingState: "in_course", nextVisitDate: null });
    expect(state("2-1")).toMatchObject({ bookingState: "requested", requestedDate: "2026-11-20" });
    expect(state("3-0")).toMatchObject({ bookingState: "not_booked" });
    expect(state("3-1")).toMatchObject({ bookingState: "booked", nextVisitDate: TODAY });
    expect(state("3-2")).toMatchObject({ bookingState: "not_booked" });
    expect(state("5-0")).toMatchObject({ bookingState: "in_course", nextVisitDate: null });
    expect(state("1-0")?.customerEmail).toBe("keeper01@example.com");
    const others = page.rows.filter((r) => !["1-0", "2-0", "2-1", "3-0", "3-1", "3-2", "5-0"].some((k) => ids.yards[k] === r.id));
    expect(others.every((r) => r.bookingState === "never_booked")).toBe(true);
  });

  it("counts and totals the whole filtered set, equal to sums straight from the tables", async () => {
    const page = await listYards(db, { today: TODAY });
    const sums = await db.raw(`
      select count(*)::int as n, sum(colony_count)::int as colonies,
        count(*) filter (where brood_status = 'brood')::int as brood, count(*) filter (where supers_off)::int as supers_off
      from yards y join customers c on c.id = y.customer_id where y.archived_at is null and c.anonymised_at is null`);
    expect(page.total).toBe(sums.rows[0].n);
    expect(page.totals).toEqual({ colonies: sums.rows[0].colonies, broodYards: sums.rows[0].brood, supersOffYards: sums.rows[0].supers_off, bookedYards: 2 });
    expect(page.rows).toHaveLength(25);

    const inCourse = await listYards(db, { today: TODAY, state: "in_course" });
    expect(inCourse.rows.map((r) => r.id).sort((a, b) => a - b)).toEqual([ids.yards["2-0"], ids.yards["5-0"]].sort((a, b) => a - b));
    expect(inCourse.totals.colonies).toBe(inCourse.rows.reduce((s, r) => s + r.colonies, 0));
    // An unknown state filter is ignored.
    expect((await listYards(db, { today: TODAY, state: "bogus" })).total).toBe(page.total);
  });

  it("searches yard and customer, sorts both ways and pages", async () => {
    const home = await listYards(db, { today: TODAY, search: "home YARD", pageSize: 100 });
    expect(home.rows.every((r) => r.name === "Home yard")).toBe(true);
    expect(home.total).toBe(Object.keys(ids.yards).filter((k) => k.endsWith("-0")).length);
    const byCustomer = await listYards(db, { today: TODAY, search: "keeper03@example.com" });
    expect(byCustomer.rows.map((r) => r.name).sort()).toEqual(["Home yard", "Out yard 3-1", "Out yard 3-2"]);

    const asc = (await listYards(db, { today: TODAY, sort: "colonies", dir: "asc", pageSize: 100 })).rows.map((r) => r.colonies);
    const desc = (await listYards(db, { today: TODAY, sort: "colonies", dir: "desc", pageSize: 100 })).rows.map((r) => r.colonies);
    expect(asc).toEqual([...asc].sort((a, b) => a - b));
    expect(desc).toEqual([...asc].sort((a, b) => b - a));
    const customers = (await listYards(db, { today: TODAY, sort: "customer", dir: "desc", pageSize: 100 })).rows.map((r) => r.customerName);
    expect(customers).toEqual([...customers].sort((a, b) => -byName(a, b)));

    const all = (await listYards(db, { today: TODAY, pageSize: 100 })).rows.map((r) => r.id);
    const second = await listYards(db, { today: TODAY, page: 2 });
    expect(second.rows.map((r) => r.id)).toEqual(all.slice(25, 50));
  });
});
