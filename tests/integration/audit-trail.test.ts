import { afterAll, beforeEach, describe, expect, it } from "vitest";
import type { AuditArea } from "~/domain/audit-descriptions";
import { defaultBusinessSettings } from "~/domain/settings";
import { auditActors, searchAuditTrail } from "~/models/audit-trail.server";
import { recordOfficePayment, refundPayment } from "~/models/payments.server";
import { db } from "~/services/db.server";
import { anInvoice } from "./payment-fixtures";
import { resetDatabase } from "./reset-database";

// The owner's audit trail: search, area, actor and date filters, order, paging and count.
// Entries are written straight into audit_log here (with chosen times), except where the
// test is about an entry a real write path leaves.

afterAll(() => db.destroy());

let seq = 0;
async function aUser(role: "owner" | "office" | "dispatcher" | "crew" | "customer", name: string, email?: string) {
  seq++;
  const [user] = await db("users")
    .insert({ email: email ?? `${role}${seq}@example.test`, password_hash: "x", role, name })
    .returning("id");
  return Number(user.id);
}

type Entry = { at: string; actor: number | null; action: string; entityType?: string; entityId?: string; before?: unknown; after?: unknown };
async function write(entries: Entry[]) {
  const rows = await db("audit_log")
    .insert(
      entries.map((e) => ({
        at: new Date(e.at),
        actor_user_id: e.actor,
        action: e.action,
        entity_type: e.entityType ?? e.action.split(".")[0],
        entity_id: e.entityId ?? "1",
        before: e.before === undefined ? null : JSON.stringify(e.before),
        after: e.after === undefined ? null : JSON.stringify(e.after),
      })),
    )
    .returning("id");
  return rows.map((r) => Number(r.id));
}

const ids = (page: { rows: { id: number }[] }) => page.rows.map((r) => r.id);

let office: number;
let dispatcher: number;
beforeEach(async () => {
  await resetDatabase(db);
  office = await aUser("office", "Priya Ledger", "priya.ledger@example.test");
  dispatcher = await aUser("dispatcher", "Marco Routes", "marco@example.test");
});

describe("searchAuditTrail: search", () => {
  it("finds entries by action, record, actor name and e-mail, and before/after values", async () => {
    const [booking, reschedule, voided, planned, stripePaid] = await write([
      { at: "2026-11-01T12:00:00Z", actor: dispatcher, action: "booking.create", entityId: "41", after: { serviceDate: "2026-11-20", colonies: 4 } },
      { at: "2026-11-02T12:00:00Z", actor: dispatcher, action: "visit.reschedule", entityType: "visit", entityId: "9001", after: { serviceDate: "2026-11-22", reason: "Flooded lane" } },
      { at: "2026-11-03T12:00:00Z", actor: office, action: "invoice.void", entityId: "77", before: { status: "open" }, after: { status: "void", reason: "Duplicate entry" } },
      { at: "2026-11-04T12:00:00Z", actor: dispatcher, action: "service_day.plan", entityType: "service_day", entityId: "2026-11-20", after: { crews: [] } },
      { at: "2026-11-05T12:00:00Z", actor: null, action: "payment.card", entityType: "payment", entityId: "3", after: { amountCents: 100 } },
    ]);
    const search = async (text: string) => ids(await searchAuditTrail(db, { search: text }));
    expect(await search("reschedule")).toEqual([reschedule]); // action
    expect(await search("9001")).toEqual([reschedule]); // entity id
    expect(await search("service day")).toEqual([planned]); // record type in words
    expect(await search("priya")).toEqual([voided]); // actor name
    expect(await search("marco@example")).toEqual([planned, reschedule, booking]); // actor e-mail, newest first
    expect(await search("flooded")).toEqual([reschedule]); // a value after
    expect(await search("OPEN")).toEqual([voided]); // a value before, any case
    expect(await search("payment")).toEqual([stripePaid]);
    expect(await search("nothing like this")).toEqual([]);
    // LIKE wildcards are literal.
    expect(await search("%")).toEqual([]);
    expect(await search("_")).toEqual([planned]); // only service_day.plan has "_" in its action/record
  });

  it("finds a payment and its refund by the number of the invoice they are on", async () => {
    const paid = await anInvoice(db, 4_000);
    const other = await anInvoice(db, 9_000);
    const { paymentId } = await recordOfficePayment(db, { invoiceId: paid.invoiceId, amountCents: 4_000, method: "cheque", actorUserId: office });
    await recordOfficePayment(db, { invoiceId: other.invoiceId, amountCents: 1_000, method: "cash", actorUserId: office });
    const { refundId } = await refundPayment(db, { paymentId, amountCents: 500, reason: "Goodwill", actorUserId: office });
    const page = await searchAuditTrail(db, { search: paid.number });
    expect(page.rows.map((r) => [r.action, r.entityId])).toEqual([
      ["refund.record", String(refundId)],
      ["invoice.status", String(paid.invoiceId)],
      ["payment.record", String(paymentId)],
    ]);
  });
});

describe("searchAuditTrail: filters", () => {
  it("filters by area, with visit actions split between bookings and tallies", async () => {
    const [book, move, supers, finish, tally, invoice, pay, refund, settings, yard, unknown, run] = await write([
      { at: "2026-11-01T12:00:00Z", actor: dispatcher, action: "booking.create" },
      { at: "2026-11-01T12:01:00Z", actor: dispatcher, action: "visit.reschedule", entityType: "visit" },
      { at: "2026-11-01T12:02:00Z", actor: dispatcher, action: "visit.supers_off", entityType: "visit" },
      { at: "2026-11-01T12:03:00Z", actor: dispatcher, action: "visit.finish", entityType: "visit" },
      { at: "2026-11-01T12:04:00Z", actor: dispatcher, action: "tally.record", entityType: "visit" },
      { at: "2026-11-01T12:05:00Z", actor: office, action: "invoice.create" },
      { at: "2026-11-01T12:06:00Z", actor: office, action: "payment.record" },
      { at: "2026-11-01T12:07:00Z", actor: office, action: "refund.record" },
      { at: "2026-11-01T12:08:00Z", actor: office, action: "settings.update", entityType: "settings", entityId: "business" },
      { at: "2026-11-01T12:09:00Z", actor: office, action: "yard.create" },
      { at: "2026-11-01T12:10:00Z", actor: office, action: "visit.colour_changed", entityType: "visit" },
      { at: "2026-11-01T12:11:00Z", actor: dispatcher, action: "run.publish" },
    ]);
    const area = async (a: AuditArea) => ids(await searchAuditTrail(db, { area: a, sort: "oldest" }));
    expect(await area("bookings")).toEqual([book, move]);
    expect(await area("tallies")).toEqual([supers, finish, tally]);
    expect(await area("runs")).toEqual([run]);
    expect(await area("invoices")).toEqual([invoice]);
    expect(await area("payments")).toEqual([pay, refund]);
    expect(await area("settings")).toEqual([settings]);
    expect(await area("customers")).toEqual([yard]);
    expect(await area("other")).toEqual([unknown]);
    expect((await searchAuditTrail(db, { area: "all" })).total).toBe(12);
  });

  it("filters by actor, and by no person (the system and Stripe)", async () => {
    const [a, b, c, d] = await write([
      { at: "2026-11-01T12:00:00Z", actor: office, action: "payment.record" },
      { at: "2026-11-01T13:00:00Z", actor: dispatcher, action: "run.publish" },
      { at: "2026-11-01T14:00:00Z", actor: null, action: "payment.card", entityType: "payment" },
      { at: "2026-11-01T15:00:00Z", actor: null, action: "invoice.email_queued", entityType: "invoice" },
    ]);
    expect(ids(await searchAuditTrail(db, { actor: office }))).toEqual([a]);
    expect(ids(await searchAuditTrail(db, { actor: dispatcher }))).toEqual([b]);
    const system = await searchAuditTrail(db, { actor: "system" });
    expect(ids(system)).toEqual([d, c]);
    expect(system.rows.map((r) => r.actor)).toEqual([
      { kind: "system", name: "System" },
      { kind: "system", name: "Stripe" },
    ]);
    expect((await searchAuditTrail(db, { actor: office })).rows[0].actor).toEqual({
      kind: "user",
      id: office,
      name: "Priya Ledger",
      email: "priya.ledger@example.test",
      role: "office",
      roleName: "Office",
    });
    expect(await auditActors(db)).toEqual([
      { id: dispatcher, name: "Marco Routes", role: "dispatcher", roleName: "Dispatcher" },
      { id: office, name: "Priya Ledger", role: "office", roleName: "Office" },
    ]);
  });

  it("takes the date range as whole days in the business's time zone", async () => {
    // Los Angeles is on PST (UTC−8) on 2026-03-01 (daylight time starts on 2026-03-08).
    await db("settings").insert({ key: "business", value: JSON.stringify({ ...defaultBusinessSettings, timeZone: "America/Los_Angeles" }) });
    const [lateFeb28, earlyMar1, lateMar1, earlyMar2] = await write([
      { at: "2026-03-01T07:59:59Z", actor: office, action: "payment.record" }, // Feb 28, 11:59:59 PM PST
      { at: "2026-03-01T08:00:00Z", actor: office, action: "payment.record" }, // Mar 1, 12:00 AM PST
      { at: "2026-03-02T07:59:59Z", actor: office, action: "payment.record" }, // Mar 1, 11:59:59 PM PST
      { at: "2026-03-02T08:00:00Z", actor: office, action: "payment.record" }, // Mar 2, 12:00 AM PST
    ]);
    const page = await searchAuditTrail(db, { from: "2026-03-01", to: "2026-03-01" });
    expect(ids(page)).toEqual([lateMar1, earlyMar1]);
    expect(page.timeZone).toBe("America/Los_Angeles");
    expect(ids(await searchAuditTrail(db, { from: "2026-03-02" }))).toEqual([earlyMar2]);
    expect(ids(await searchAuditTrail(db, { to: "2026-02-28" }))).toEqual([lateFeb28]);
  });
});

describe("searchAuditTrail: order, paging and count", () => {
  it("pages 50 at a time, newest or oldest first, with the total found on every page", async () => {
    const start = Date.parse("2026-10-01T00:00:00Z");
    const written = await write(
      Array.from({ length: 120 }, (_, i) => ({
        at: new Date(start + i * 3_600_000).toISOString(),
        actor: i % 3 === 0 ? office : dispatcher,
        action: i % 3 === 0 ? "payment.record" : "run.publish",
        entityId: String(i + 1),
      })),
    );
    const newestFirst = [...written].reverse();

    const first = await searchAuditTrail(db, {});
    expect(first).toMatchObject({ total: 120, page: 1, pageSize: 50, lastPage: 3 });
    expect(ids(first)).toEqual(newestFirst.slice(0, 50));
    const second = await searchAuditTrail(db, { page: 2 });
    expect(ids(second)).toEqual(newestFirst.slice(50, 100));
    const third = await searchAuditTrail(db, { page: 3 });
    expect(ids(third)).toEqual(newestFirst.slice(100));
    expect(third.total).toBe(120);
    // Past the end: the last page.
    expect(await searchAuditTrail(db, { page: 40 })).toMatchObject({ page: 3, total: 120 });
    expect(ids(await searchAuditTrail(db, { sort: "oldest" }))).toEqual(written.slice(0, 50));

    // The count follows the filters: every third entry is the office's payment.
    const payments = await searchAuditTrail(db, { area: "payments", page: 1 });
    expect(payments).toMatchObject({ total: 40, lastPage: 1 });
    expect(payments.rows.every((r) => r.action === "payment.record")).toBe(true);
  });

  it("with nothing found, says 0 on page 1", async () => {
    await write([{ at: "2026-11-01T12:00:00Z", actor: office, action: "payment.record" }]);
    expect(await searchAuditTrail(db, { search: "zzz", page: 4 })).toMatchObject({ rows: [], total: 0, page: 1, lastPage: 1 });
  });
});

describe("searchAuditTrail: rows as the owner reads them", () => {
  it("describes an office payment with its invoice's number and links it to the invoice", async () => {
    const invoice = await anInvoice(db, 10_000);
    const { paymentId } = await recordOfficePayment(db, { invoiceId: invoice.invoiceId, amountCents: 4_000, method: "cheque", actorUserId: office });
    const page = await searchAuditTrail(db, { area: "payments" });
    expect(page.rows).toHaveLength(1);
    const row = page.rows[0];
    expect(row).toMatchObject({
      action: "payment.record",
      area: "payments",
      entityType: "payment",
      entityId: String(paymentId),
      description: `Recorded a cheque payment of $40.00 on invoice ${invoice.number}`,
      entity: { label: `Payment #${paymentId} on invoice ${invoice.number}`, href: `/office/invoices/${invoice.invoiceId}` },
      actor: { kind: "user", id: office, roleName: "Office" },
    });
    expect(row.changes).toEqual(
      expect.arrayContaining([
        { label: "Amount", before: null, after: "$40.00" },
        { label: "Method", before: null, after: "cheque" },
      ]),
    );
  });

  it("names a run by its crew and day and links it to the day", async () => {
    const [crew] = await db("crews")
      .insert({ name: "Crew Lakeside", start_label: "Shop", start_lat: 42.44, start_lng: -76.5, work_start: "08:00", work_end: "17:00", vaporizers: 2 })
      .returning("id");
    const [run] = await db("runs").insert({ crew_id: crew.id, service_date: "2026-11-18", status: "published" }).returning("id");
    await write([
      { at: "2026-11-17T20:00:00Z", actor: dispatcher, action: "run.publish", entityType: "run", entityId: String(run.id), before: { status: "draft" }, after: { status: "published", stops: 4, version: 1, service_date: "2026-11-18" } },
    ]);
    const [row] = (await searchAuditTrail(db, {})).rows;
    // 2026-11-18 is a Wednesday.
    expect(row.entity).toEqual({ label: "Crew Lakeside's run, Wed, Nov 18, 2026", href: "/dispatch/days/2026-11-18" });
    expect(row.description).toBe("Published the run for Wed, Nov 18, 2026 to the crew with 4 stops (version 1)");
    expect(row.changes).toContainEqual({ label: "Status", before: "draft", after: "published" });
  });
});
