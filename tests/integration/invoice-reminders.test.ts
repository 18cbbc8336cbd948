import { randomUUID } from "node:crypto";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { defaultBusinessSettings } from "~/domain/settings";
import { deliverEmail } from "~/models/emails.server";
import { invoiceReminderDedupeKey, overdueReminderNumber, queueOverdueReminders } from "~/models/invoice-reminders.server";
import { recordOfficePayment } from "~/models/payments.server";
import { saveBusinessSettings } from "~/models/settings.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { verifyPayLinkToken } from "~/services/pay-link.server";
import { waitForEmail } from "./mail-sink";
import { anOfficeUser } from "./payment-fixtures";
import { resetDatabase } from "./reset-database";

// Overdue invoice reminders, through the real local SMTP sink. Every recipient is unique to
// this run, so the shared sink is read by recipient and never cleared.

afterAll(async () => {
  // Office payments request delivery, which starts a pg-boss sender in this process.
  await stopJobs();
  await db.destroy();
});

const N = 5; // overdueReminderDays in this file's settings
const ZONE = "America/New_York";
// 03:00 UTC on Dec 2 is still Dec 1 in New York (UTC−5): the business's today is Dec 1.
const NOW = new Date("2026-12-02T03:00:00Z");
const TODAY = "2026-12-01";
const DAY_MS = 86_400_000;

const run = randomUUID().slice(0, 8);
let seq = 0;
let office: number;

function daysBefore(date: string, days: number): string {
  return new Date(Date.parse(`${date}T00:00:00Z`) - days * DAY_MS).toISOString().slice(0, 10);
}

function later(days: number): Date {
  return new Date(NOW.getTime() + days * DAY_MS);
}

type TestInvoice = { invoiceId: number; customerId: number; number: string; email: string };

async function anInvoiceDue(dueOn: string, p: { totalCents?: number; status?: "open" | "paid" | "void"; email?: string } = {}): Promise<TestInvoice> {
  seq++;
  const email = p.email ?? `reminded${seq}.${run}@example.test`;
  const [customer] = await db("customers").insert({ name: `Reminded Customer ${seq}`, email }).returning("id");
  const number = `2026-${String(900_000 + seq).padStart(6, "0")}`;
  const total = p.totalCents ?? 10_000;
  const [invoice] = await db("invoices")
    .insert({
      year: 2026,
      sequence: 900_000 + seq,
      number,
      customer_id: customer.id,
      status: p.status ?? "open",
      issued_on: daysBefore(dueOn, 14),
      due_on: dueOn,
      subtotal_cents: total,
      tax_cents: 0,
      total_cents: total,
      currency: "usd",
    })
    .returning("id");
  return { invoiceId: Number(invoice.id), customerId: Number(customer.id), number, email };
}

async function reminderKeys(invoiceId: number): Promise<(string | null)[]> {
  return db("email_log").where({ invoice_id: invoiceId, kind: "invoice_reminder" }).orderBy("id").pluck("dedupe_key");
}

beforeEach(async () => {
  await resetDatabase(db);
  office = await anOfficeUser(db);
  await saveBusinessSettings(db, { ...defaultBusinessSettings, overdueReminderDays: N, timeZone: ZONE }, office);
});

describe("overdueReminderNumber", () => {
  it("is 0 before N days, k from k×N days, and never more than 3", () => {
    expect([0, 4, 5, 9, 10, 14, 15, 16, 100].map((d) => overdueReminderNumber(d, 5))).toEqual([0, 0, 1, 1, 2, 2, 3, 3, 3]);
    expect(() => overdueReminderNumber(10, 0)).toThrow(RangeError);
  });
});

describe("queueOverdueReminders", () => {
  it("reminds from N days past due in the business's time zone, only the highest reminder due, once", async () => {
    const notYet = await anInvoiceDue(daysBefore(TODAY, N - 1));
    const first = await anInvoiceDue(daysBefore(TODAY, N));
    const second = await anInvoiceDue(daysBefore(TODAY, 2 * N));
    const notDue = await anInvoiceDue(daysBefore(TODAY, -3)); // due in 3 days

    const ids = await queueOverdueReminders(db, NOW);
    expect(ids).toHaveLength(2);
    expect(await reminderKeys(notYet.invoiceId)).toEqual([]);
    expect(await reminderKeys(notDue.invoiceId)).toEqual([]);
    expect(await reminderKeys(first.invoiceId)).toEqual([invoiceReminderDedupeKey(first.invoiceId, 1)]);
    expect(invoiceReminderDedupeKey(first.invoiceId, 1)).toBe(`invoice_reminder:${first.invoiceId}:1`);
    expect(await reminderKeys(second.invoiceId)).toEqual([`invoice_reminder:${second.invoiceId}:2`]);

    const rows = await db("email_log").whereIn("id", ids).orderBy("id");
    expect(rows.map((r) => [r.invoice_id, r.customer_id, r.to_address, r.status])).toEqual([
      [second.invoiceId, second.customerId, second.email, "queued"],
      [first.invoiceId, first.customerId, first.email, "queued"],
    ]);

    // reminded_at and the audit trail.
    for (const invoice of [first, second]) {
      expect((await db("invoices").where({ id: invoice.invoiceId }).first())!.reminded_at).toEqual(NOW);
    }
    expect((await db("invoices").where({ id: notYet.invoiceId }).first())!.reminded_at).toBeNull();
    const audit = await db("audit_log").where({ action: "invoice.reminder_queued" }).orderBy("id");
    expect(audit.map((a) => [a.entity_type, a.entity_id, a.actor_user_id])).toEqual([
      ["invoice", String(second.invoiceId), null],
      ["invoice", String(first.invoiceId), null],
    ]);
    expect(audit[1].after).toMatchObject({ emailId: ids[1], reminder: 1, daysOverdue: N, balanceCents: 10_000 });
    expect(audit[0].after).toMatchObject({ emailId: ids[0], reminder: 2, daysOverdue: 2 * N });

    // Again the same business day (10:00 and 22:30 in New York): nothing new.
    expect(await queueOverdueReminders(db, new Date(NOW.getTime() - 12 * 3600_000))).toEqual([]);
    expect(await queueOverdueReminders(db, new Date(NOW.getTime() + 30 * 60_000))).toEqual([]);
    expect(await db("email_log").where({ kind: "invoice_reminder" })).toHaveLength(2);
    expect(await db("audit_log").where({ action: "invoice.reminder_queued" })).toHaveLength(2);
  });

  it("sends reminder 2 after 2N days and 3 after 3N days, then no more", async () => {
    const invoice = await anInvoiceDue(daysBefore(TODAY, N));
    expect(await queueOverdueReminders(db, NOW)).toHaveLength(1);
    expect(await queueOverdueReminders(db, later(N - 1))).toEqual([]);
    expect(await queueOverdueReminders(db, later(N))).toHaveLength(1);
    expect(await queueOverdueReminders(db, later(2 * N))).toHaveLength(1);
    expect(await queueOverdueReminders(db, later(3 * N))).toEqual([]);
    expect(await queueOverdueReminders(db, later(10 * N))).toEqual([]);
    expect(await reminderKeys(invoice.invoiceId)).toEqual([1, 2, 3].map((k) => `invoice_reminder:${invoice.invoiceId}:${k}`));
  });

  it("leaves at least N days between two reminders of one invoice", async () => {
    // 2N−1 days overdue: reminder 1 today; reminder 2 would be due tomorrow, but waits N days.
    const invoice = await anInvoiceDue(daysBefore(TODAY, 2 * N - 1));
    expect(await queueOverdueReminders(db, NOW)).toHaveLength(1);
    expect(await queueOverdueReminders(db, later(1))).toEqual([]);
    expect(await queueOverdueReminders(db, later(N - 1))).toEqual([]);
    expect(await queueOverdueReminders(db, later(N))).toHaveLength(1);
    expect(await reminderKeys(invoice.invoiceId)).toEqual([1, 2].map((k) => `invoice_reminder:${invoice.invoiceId}:${k}`));
  });

  it("skips paid, void and fully paid invoices, anonymised customers and unusable addresses", async () => {
    const due = daysBefore(TODAY, 2 * N);
    const paid = await anInvoiceDue(due, { status: "paid" });
    const voided = await anInvoiceDue(due, { status: "void" });
    const paidAtOffice = await anInvoiceDue(due, { totalCents: 8_000 });
    await recordOfficePayment(db, { invoiceId: paidAtOffice.invoiceId, amountCents: 3_000, method: "cash", actorUserId: office });
    await recordOfficePayment(db, { invoiceId: paidAtOffice.invoiceId, amountCents: 5_000, method: "cheque", reference: "Cheque 88", actorUserId: office });
    const anonymised = await anInvoiceDue(due);
    await db("customers").where({ id: anonymised.customerId }).update({ anonymised_at: new Date() });
    const noAddress = await anInvoiceDue(due, { email: "no address on file" });
    const partlyPaid = await anInvoiceDue(due, { totalCents: 12_500 });
    await recordOfficePayment(db, { invoiceId: partlyPaid.invoiceId, amountCents: 2_500, method: "cash", actorUserId: office });

    const ids = await queueOverdueReminders(db, NOW);
    expect(ids).toHaveLength(1);
    for (const skipped of [paid, voided, paidAtOffice, anonymised, noAddress]) {
      expect(await reminderKeys(skipped.invoiceId)).toEqual([]);
      expect((await db("invoices").where({ id: skipped.invoiceId }).first())!.reminded_at).toBeNull();
    }
    expect(await reminderKeys(partlyPaid.invoiceId)).toEqual([`invoice_reminder:${partlyPaid.invoiceId}:2`]);
    const row = (await db("email_log").where({ id: ids[0] }).first())!;
    // $125.00 less the $25.00 paid in cash.
    expect(row.subject).toContain("$100.00");
    expect(row.text_body).toContain("Still owed: $100.00");
  });

  it("delivers the reminder to the customer with a pay link signed for the invoice", async () => {
    const invoice = await anInvoiceDue(daysBefore(TODAY, N + 2), { totalCents: 43_210 });
    const [emailId] = await queueOverdueReminders(db, NOW);
    expect(await deliverEmail(db, emailId)).toBe("sent");

    const email = await waitForEmail(invoice.email, (e) => e.subject.startsWith("Reminder:"));
    expect(email.subject).toBe(`Reminder: invoice ${invoice.number}, $432.10 due since Tue, Nov 24, 2026`); // Source: calendar: 24 November 2026 is a Tuesday.
    expect(email.text).toContain(`Days overdue: ${N + 2}`);
    expect(email.html).toContain("Safety with oxalic acid vapor");
    const token = /\/pay\/([A-Za-z0-9._-]+)"/.exec(email.html)?.[1];
    expect(token).toBeTruthy();
    expect(verifyPayLinkToken(token!)).toMatchObject({ ok: true, invoiceId: invoice.invoiceId });
    expect((await db("email_log").where({ id: emailId }).first())!.status).toBe("sent");
  });
});
