import knex, { type Knex } from "knex";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import config from "../../knexfile";
import { migrationConfig } from "./migration-source";
import { resetDatabase } from "./reset-database";

const db: Knex = knex({ ...config, connection: process.env.DATABASE_URL, migrations: migrationConfig() });
afterAll(() => db.destroy());
beforeEach(() => resetDatabase(db));

async function aCustomer() {
  const [customer] = await db("customers").insert({ name: "Test Customer", email: "test.customer@example.test" }).returning("id");
  return customer.id as number;
}

function aYard(customerId: number, overrides: Record<string, unknown> = {}) {
  return { customer_id: customerId, name: "Test yard", lat: 42.4, lng: -76.4, colony_count: 3, ...overrides };
}

describe("migrations", () => {
  it("go down and up again cleanly, ending with every table present", async () => {
    const before = await db.raw("select count(*)::int as n from pg_tables where schemaname = 'public'");
    await db.migrate.rollback(undefined, true);
    const empty = await db.raw("select tablename from pg_tables where schemaname = 'public' and tablename not like 'knex_migrations%'");
    expect(empty.rows).toEqual([]);
    await db.migrate.latest();
    const after = await db.raw("select count(*)::int as n from pg_tables where schemaname = 'public'");
    expect(after.rows[0].n).toBe(before.rows[0].n);
    const [, pending] = await db.migrate.list();
    expect(pending).toEqual([]);
  });
});

describe("constraints refuse bad rows", () => {
  it("refuses a negative colony count", async () => {
    const customerId = await aCustomer();
    await expect(db("yards").insert(aYard(customerId, { colony_count: -1 }))).rejects.toThrow(/yards_colony_count_check/);
  });

  it("refuses latitude 91 and longitude 181, and accepts the poles", async () => {
    const customerId = await aCustomer();
    await expect(db("yards").insert(aYard(customerId, { lat: 91 }))).rejects.toThrow(/yards_lat_check/);
    await expect(db("yards").insert(aYard(customerId, { lng: 181 }))).rejects.toThrow(/yards_lng_check/);
    await expect(db("yards").insert(aYard(customerId, { lat: 90, lng: -180 }))).resolves.toBeDefined();
  });

  it("refuses a duplicate e-mail for users", async () => {
    const user = { email: "same@example.test", password_hash: "x", role: "office" as const, name: "A" };
    await db("users").insert(user);
    await expect(db("users").insert({ ...user, name: "B" })).rejects.toThrow(/users_email_unique/);
  });

  it("refuses an unknown role and an upper-case e-mail", async () => {
    await expect(db("users").insert({ email: "r@example.test", password_hash: "x", role: "admin" as "owner", name: "A" })).rejects.toThrow(/users_role_check/);
    await expect(db("users").insert({ email: "Upper@example.test", password_hash: "x", role: "crew", name: "A" })).rejects.toThrow(/users_email_check/);
  });

  it("refuses money that is not whole cents or totals that do not add up", async () => {
    const customerId = await aCustomer();
    const invoice = { year: 2026, sequence: 1, number: "2026-0001", customer_id: customerId, issued_on: "2026-10-01", due_on: "2026-10-31", subtotal_cents: 1000, tax_cents: 80, total_cents: 1080 };
    await expect(db("invoices").insert({ ...invoice, subtotal_cents: 10.5, total_cents: 90.5 })).rejects.toThrow(/integer/);
    await expect(db("invoices").insert({ ...invoice, total_cents: 1000 })).rejects.toThrow(/invoices_total_check/);
    await expect(db("invoices").insert(invoice)).resolves.toBeDefined();
  });

  it("refuses a skipped tally without a reason and a treated one with a reason", async () => {
    const customerId = await aCustomer();
    const [yard] = await db("yards").insert(aYard(customerId)).returning("id");
    const [course] = await db("courses").insert({ yard_id: yard.id, brood_status: "broodless", rounds_planned: 1, interval_days: 0 }).returning("id");
    const [visit] = await db("visits").insert({ course_id: course.id, yard_id: yard.id, round_number: 1, service_date: "2026-11-02", colonies_expected: 3 }).returning("id");
    const tally = { visit_id: visit.id, colony_label: "H1", brood_boxes: 1, dose_grams: 1 };
    await expect(db("tallies").insert({ ...tally, outcome: "skipped" })).rejects.toThrow(/tallies_skip_reason_check/);
    await expect(db("tallies").insert({ ...tally, outcome: "treated", skip_reason: "queenless" })).rejects.toThrow(/tallies_skip_reason_check/);
    await expect(db("tallies").insert({ ...tally, outcome: "skipped", skip_reason: "dead_out", dose_grams: 0 })).resolves.toBeDefined();
  });
});
