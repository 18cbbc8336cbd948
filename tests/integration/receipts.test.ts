import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { defaultBusinessSettings } from "~/domain/settings";
import { deliverEmail } from "~/models/emails.server";
import { handleStripeWebhook, recordOfficePayment, startCardPayment } from "~/models/payments.server";
import { paymentReceiptDedupeKey, queueReceiptEmail } from "~/models/receipts.server";
import { saveBusinessSettings } from "~/models/settings.server";
import { db } from "~/services/db.server";
import { jobsBoss, SEND_EMAIL_QUEUE, stopJobs, type SendEmailJob } from "~/services/jobs.server";
import { type FakeEvent, type StripeFake, startStripeFake } from "~/services/stripe-fake/server";
import { createStripeClient, type Stripe } from "~/services/stripe.server";
import { waitForEmail } from "./mail-sink";
import { anInvoice, anOfficeUser } from "./payment-fixtures";
import { resetDatabase } from "./reset-database";

// Payment receipts: queued with the payment (card by signed webhook, cash and cheque by the
// office), once per payment, delivered through the real local SMTP sink. The fake Stripe
// server runs in this process and keeps its events; the test delivers them, signed.

const SECRET = "whsec_test_receipts";
let fake: StripeFake;
let stripe: Stripe;
const deps = () => ({ stripe, webhookSecret: SECRET });
const run = randomUUID().slice(0, 8);
let office: number;

beforeAll(async () => {
  fake = await startStripeFake({ port: 0, webhookSecret: SECRET, webhookUrl: null, log: () => {} });
  stripe = createStripeClient({ secretKey: "sk_test_varroute", webhookSecret: SECRET, api: { host: "127.0.0.1", port: fake.port, protocol: "http" }, local: true });
});
afterAll(async () => {
  await fake.stop();
  await stopJobs();
  await db.destroy();
});
beforeEach(async () => {
  await resetDatabase(db);
  office = await anOfficeUser(db);
  await saveBusinessSettings(db, { ...defaultBusinessSettings, timeZone: "America/New_York" }, office);
  // Jobs left by an earlier test (pg-boss is not emptied by resetDatabase, and ids restart).
  const boss = await jobsBoss();
  for (;;) {
    const jobs = await boss.fetch<SendEmailJob>(SEND_EMAIL_QUEUE, { batchSize: 100 });
    if (jobs.length === 0) break;
    await boss.complete(SEND_EMAIL_QUEUE, jobs.map((job) => job.id));
  }
});

/** An open invoice whose customer has an address unique to this run. */
async function invoiceFor(totalCents: number, name: string) {
  const invoice = await anInvoice(db, totalCents);
  const email = `${name}.${run}@example.test`;
  await db("customers").where({ id: invoice.customerId }).update({ email });
  return { ...invoice, email };
}

function deliver(event: FakeEvent) {
  const rawBody = JSON.stringify(event);
  return handleStripeWebhook(db, { rawBody, signature: fake.sign(rawBody) }, deps());
}

async function paidThroughCheckout(invoiceId: number): Promise<FakeEvent> {
  const start = await startCardPayment(db, { invoiceId, successUrl: "http://app.test/paid", cancelUrl: "http://app.test/cancel" }, deps());
  return fake.pay(start.sessionId);
}

async function receiptRows(invoiceId: number) {
  return db("email_log").where({ invoice_id: invoiceId, kind: "payment_receipt" }).orderBy("id");
}

/** The e-mail ids of the "send-email" jobs waiting now (completed as they are read). */
async function deliveryRequested(): Promise<number[]> {
  const boss = await jobsBoss();
  const jobs = await boss.fetch<SendEmailJob>(SEND_EMAIL_QUEUE, { batchSize: 100 });
  if (jobs.length > 0) await boss.complete(SEND_EMAIL_QUEUE, jobs.map((job) => job.id));
  return jobs.map((job) => job.data.emailId).sort((a, b) => a - b);
}

describe("card payment receipts", () => {
  it("queues exactly one receipt for a checkout.session.completed webhook delivered twice, and requests its delivery", async () => {
    const invoice = await invoiceFor(9_950, "card.payer");
    const completed = await paidThroughCheckout(invoice.invoiceId);
    expect(completed.type).toBe("checkout.session.completed");

    const first = await deliver(completed);
    const second = await deliver(completed);
    expect(first).toMatchObject({ duplicate: false, handled: true });
    expect(second).toMatchObject({ duplicate: true, emailIds: [] });

    const payment = (await db("payments").where({ invoice_id: invoice.invoiceId }).first())!;
    const rows = await receiptRows(invoice.invoiceId);
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ dedupe_key: `payment_receipt:${payment.id}`, to_address: invoice.email, customer_id: invoice.customerId, status: "queued" });
    expect(paymentReceiptDedupeKey(Number(payment.id))).toBe(rows[0].dedupe_key);
    expect(first.emailIds).toEqual([Number(rows[0].id)]);
    expect(await deliveryRequested()).toEqual([Number(rows[0].id)]);

    // Delivered: the amount, the method and "paid in full".
    expect(await deliverEmail(db, Number(rows[0].id))).toBe("sent");
    const email = await waitForEmail(invoice.email, (e) => e.subject.startsWith("Receipt"));
    expect(email.subject).toBe(`Receipt for invoice ${invoice.number}: $99.50 received`);
    expect(email.text).toContain("Amount received: $99.50");
    expect(email.text).toContain("Paid by: Card");
    expect(email.text).toContain(`Reference: ${payment.stripe_payment_intent_id}`);
    expect(email.text).toContain(`Invoice ${invoice.number} is paid in full.`);
    expect(email.html).not.toContain("/pay/");
  });

  it("queues one receipt when the same event arrives three times at once", async () => {
    const invoice = await invoiceFor(4_200, "card.concurrent");
    const completed = await paidThroughCheckout(invoice.invoiceId);
    const outcomes = await Promise.all([deliver(completed), deliver(completed), deliver(completed)]);
    expect(outcomes.flatMap((o) => o.emailIds)).toHaveLength(1);
    expect(await receiptRows(invoice.invoiceId)).toHaveLength(1);
  });

  it("queues no receipt for an anonymised customer, and still records the payment", async () => {
    const invoice = await invoiceFor(3_000, "card.anonymised");
    const completed = await paidThroughCheckout(invoice.invoiceId);
    await db("customers").where({ id: invoice.customerId }).update({ anonymised_at: new Date() });
    const outcome = await deliver(completed);
    expect(outcome).toMatchObject({ handled: true, emailIds: [] });
    expect(await db("payments").where({ invoice_id: invoice.invoiceId }).pluck("amount_cents")).toEqual([3_000]);
    expect((await db("invoices").where({ id: invoice.invoiceId }).first())!.status).toBe("paid");
    expect(await receiptRows(invoice.invoiceId)).toEqual([]);
  });
});

describe("office payment receipts", () => {
  it("queues one receipt per cheque or cash payment, with what is still owed, and delivers it", async () => {
    const invoice = await invoiceFor(20_000, "cheque.payer");
    const cheque = await recordOfficePayment(db, { invoiceId: invoice.invoiceId, amountCents: 12_345, method: "cheque", reference: "Cheque 1042", actorUserId: office });
    expect(cheque.receiptEmailId).toEqual(expect.any(Number));
    let rows = await receiptRows(invoice.invoiceId);
    expect(rows.map((r) => [Number(r.id), r.dedupe_key])).toEqual([[cheque.receiptEmailId, `payment_receipt:${cheque.paymentId}`]]);
    expect(await deliveryRequested()).toEqual([cheque.receiptEmailId]);

    // Queueing the same payment's receipt again queues nothing.
    expect(await db.transaction((trx) => queueReceiptEmail(trx, cheque.paymentId))).toBeNull();
    expect(await receiptRows(invoice.invoiceId)).toHaveLength(1);

    expect(await deliverEmail(db, cheque.receiptEmailId!)).toBe("sent");
    const email = await waitForEmail(invoice.email, (e) => e.subject.includes("$123.45"));
    expect(email.subject).toBe(`Receipt for invoice ${invoice.number}: $123.45 received`);
    expect(email.text).toContain("Paid by: Cheque");
    expect(email.text).toContain("Reference: Cheque 1042");
    // $200.00 less $123.45.
    expect(email.text).toContain("Still owed: $76.55");
    expect(email.html).toMatch(/\/pay\/[A-Za-z0-9._-]+"/);

    // Cash for the rest: a second receipt, "paid in full".
    const cash = await recordOfficePayment(db, { invoiceId: invoice.invoiceId, amountCents: 7_655, method: "cash", actorUserId: office });
    rows = await receiptRows(invoice.invoiceId);
    expect(rows.map((r) => r.dedupe_key)).toEqual([`payment_receipt:${cheque.paymentId}`, `payment_receipt:${cash.paymentId}`]);
    expect(rows[1].text_body).toContain("Paid by: Cash");
    expect(rows[1].text_body).toContain("paid in full");
  });

  it("queues nothing for a customer without a usable address, and a refused payment leaves no receipt", async () => {
    const invoice = await invoiceFor(5_000, "no.address");
    await db("customers").where({ id: invoice.customerId }).update({ email: "none" });
    const result = await recordOfficePayment(db, { invoiceId: invoice.invoiceId, amountCents: 5_000, method: "cash", actorUserId: office });
    expect(result).toMatchObject({ status: "paid", receiptEmailId: null });
    expect(await receiptRows(invoice.invoiceId)).toEqual([]);

    const other = await invoiceFor(5_000, "refused.payment");
    await expect(recordOfficePayment(db, { invoiceId: other.invoiceId, amountCents: 5_001, method: "cash", actorUserId: office })).rejects.toThrow("more than");
    expect(await receiptRows(other.invoiceId)).toEqual([]);
    expect(await deliveryRequested()).toEqual([]);
  });
});
