import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { voidInvoice } from "~/models/office-invoices.server";
import {
  handleStripeWebhook,
  invoiceBalance,
  PAYMENT_CONFIRMING_MESSAGE,
  PaymentRefused,
  recordOfficePayment,
  refundPayment,
  startCardPayment,
} from "~/models/payments.server";
import { db } from "~/services/db.server";
import { type FakeEvent, type StripeFake, startStripeFake } from "~/services/stripe-fake/server";
import { createStripeClient, type Stripe } from "~/services/stripe.server";
import { anInvoice, anOfficeUser } from "./payment-fixtures";
import { resetDatabase } from "./reset-database";

// Card payments must not take money twice or on a void invoice: one open Checkout Session per
// invoice, expired when the balance changes or the invoice is voided, and a webhook that gives
// back (refunds through Stripe) whatever it may not record. The fake Stripe server runs in
// this process and keeps its events; the tests deliver them to handleStripeWebhook.
const SECRET = "whsec_test_checkout_safety";
let fake: StripeFake;
let stripe: Stripe;
/** A client for a port where nothing listens: Stripe unreachable. */
let offline: Stripe;
const deps = () => ({ stripe, webhookSecret: SECRET });

beforeAll(async () => {
  fake = await startStripeFake({ port: 0, webhookSecret: SECRET, webhookUrl: null, log: () => {} });
  stripe = createStripeClient({ secretKey: "sk_test_varroute", webhookSecret: SECRET, api: { host: "127.0.0.1", port: fake.port, protocol: "http" }, local: true });
  const down = await startStripeFake({ port: 0, webhookSecret: SECRET, webhookUrl: null, log: () => {} });
  const port = down.port;
  await down.stop();
  offline = createStripeClient({ secretKey: "sk_test_varroute", webhookSecret: SECRET, api: { host: "127.0.0.1", port, protocol: "http" }, local: true });
});
afterAll(async () => {
  await fake.stop();
  await db.destroy();
});
let office: number;
/** Sessions the fake made in earlier tests (ids restart with each emptied database). */
let earlierSessions = new Set<string>();
beforeEach(async () => {
  await resetDatabase(db);
  office = await anOfficeUser(db);
  earlierSessions = new Set(fake.sessions.keys());
});

// $91.80: the invoice the double charge was first seen on.
const TOTAL = 9_180;
const urls = { successUrl: "http://app.test/paid?session={CHECKOUT_SESSION_ID}", cancelUrl: "http://app.test/cancel" };

function start(invoiceId: number) {
  return startCardPayment(db, { invoiceId, ...urls }, deps());
}

function deliver(event: FakeEvent) {
  const rawBody = JSON.stringify(event);
  return handleStripeWebhook(db, { rawBody, signature: fake.sign(rawBody) }, deps());
}

/** The refund.created events the fake emits after its API answer. */
async function refundEvents(paymentIntentId: string) {
  await new Promise((r) => setImmediate(r));
  return fake.events.filter((e) => e.type === "refund.created" && (e.data.object as { payment_intent: string }).payment_intent === paymentIntentId);
}

function sessionsAtStripe(invoiceId: number) {
  return [...fake.sessions.values()].filter((s) => !earlierSessions.has(s.id) && s.metadata.invoiceId === String(invoiceId));
}

function refundsAtStripe(paymentIntentId: string | null) {
  return [...fake.refunds.values()].filter((r) => r.payment_intent === paymentIntentId);
}

async function invoice(id: number) {
  return (await db("invoices").where({ id }).first())!;
}

async function refusals(invoiceId: number) {
  return db("audit_log").where({ action: "payment.card_refused", entity_type: "invoice", entity_id: String(invoiceId) }).orderBy("id");
}

/** A Checkout Session for the invoice made straight through the SDK, as a second racing start did before this fix. */
async function aSecondSessionMadeElsewhere(invoiceId: number, number: string, customer: string) {
  const metadata = { invoiceId: String(invoiceId), invoiceNumber: number };
  return stripe.checkout.sessions.create({
    mode: "payment",
    customer,
    client_reference_id: String(invoiceId),
    line_items: [{ quantity: 1, price_data: { currency: "usd", unit_amount: TOTAL, product_data: { name: `Invoice ${number}` } } }],
    metadata,
    payment_intent_data: { metadata },
    success_url: urls.successUrl,
    cancel_url: urls.cancelUrl,
  });
}

describe("one open Checkout Session per invoice", () => {
  it("10 parallel starts make one session, open at Stripe, and all answer its URL", async () => {
    const { invoiceId } = await anInvoice(db, TOTAL);
    const starts = await Promise.all(Array.from({ length: 10 }, () => start(invoiceId)));
    expect(new Set(starts.map((s) => s.sessionId)).size).toBe(1);
    expect(new Set(starts.map((s) => s.url)).size).toBe(1);
    const atStripe = sessionsAtStripe(invoiceId);
    expect(atStripe.filter((s) => s.status === "open").map((s) => s.id)).toEqual([starts[0].sessionId]);
    expect(atStripe).toHaveLength(1);
    expect(await db("checkout_sessions").where({ invoice_id: invoiceId }).select("id", "status", "amount_cents", "currency")).toEqual([
      { id: starts[0].sessionId, status: "open", amount_cents: TOTAL, currency: "usd" },
    ]);
  });

  it("will not open a second checkout while a paid one awaits its webhook", async () => {
    const { invoiceId } = await anInvoice(db, TOTAL);
    const first = await start(invoiceId);
    const completed = await fake.pay(first.sessionId); // paid; the webhook is still on its way
    await expect(start(invoiceId)).rejects.toThrow(PaymentRefused);
    await expect(start(invoiceId)).rejects.toThrow(PAYMENT_CONFIRMING_MESSAGE);
    expect(sessionsAtStripe(invoiceId)).toHaveLength(1);
    await deliver(completed);
    expect((await invoice(invoiceId)).status).toBe("paid");
    expect(await db("checkout_sessions").where({ id: first.sessionId }).first("status")).toEqual({ status: "paid" });
  });
});

describe("two sessions for one invoice, both paid", () => {
  it("records the first payment and refunds the second in full through Stripe", async () => {
    const { invoiceId, number } = await anInvoice(db, TOTAL);
    const first = await start(invoiceId);
    const customer = fake.sessions.get(first.sessionId)!.customer!;
    const second = await aSecondSessionMadeElsewhere(invoiceId, number, customer);
    const paidFirst = await fake.pay(first.sessionId);
    const paidSecond = await fake.pay(second.id);
    const firstPi = fake.sessions.get(first.sessionId)!.payment_intent!;
    const secondPi = fake.sessions.get(second.id)!.payment_intent!;

    expect(await deliver(paidFirst)).toMatchObject({ handled: true });
    expect(await deliver(paidSecond)).toMatchObject({ handled: true, refused: "invoice_not_open" });
    // Repeated deliveries, and the refund's own event, change nothing more.
    expect(await deliver(paidSecond)).toMatchObject({ duplicate: true });
    for (const event of await refundEvents(secondPi)) await deliver(event);
    await deliver(paidFirst);

    expect(await db("payments").where({ invoice_id: invoiceId }).select("amount_cents", "stripe_payment_intent_id")).toEqual([{ amount_cents: TOTAL, stripe_payment_intent_id: firstPi }]);
    expect(refundsAtStripe(secondPi).map((r) => r.amount)).toEqual([TOTAL]);
    expect(refundsAtStripe(firstPi)).toEqual([]);
    expect(await db("refunds").pluck("id")).toEqual([]);
    expect((await invoice(invoiceId)).status).toBe("paid");
    expect(await invoiceBalance(db, invoiceId)).toEqual({ totalCents: TOTAL, paidCents: TOTAL, refundedCents: 0, balanceCents: 0 });
    const [audit] = await refusals(invoiceId);
    expect(audit.after).toMatchObject({ reason: "invoice_not_open", amountCents: TOTAL, stripeCheckoutSessionId: second.id, stripePaymentIntentId: secondPi, stripeRefundId: refundsAtStripe(secondPi)[0].id });
    expect(await refusals(invoiceId)).toHaveLength(1);
  });

  it("refunds a paid session not made for the invoice even when it arrives first, then records the invoice's own", async () => {
    const { invoiceId, number } = await anInvoice(db, TOTAL);
    const own = await start(invoiceId);
    const stray = await aSecondSessionMadeElsewhere(invoiceId, number, fake.sessions.get(own.sessionId)!.customer!);
    const paidStray = await fake.pay(stray.id);
    const paidOwn = await fake.pay(own.sessionId);

    expect(await deliver(paidStray)).toMatchObject({ refused: "unknown_session" });
    expect(await deliver(paidOwn)).toMatchObject({ handled: true });
    const strayPi = fake.sessions.get(stray.id)!.payment_intent!;
    expect(refundsAtStripe(strayPi).map((r) => r.amount)).toEqual([TOTAL]);
    expect(await db("payments").where({ invoice_id: invoiceId }).pluck("stripe_payment_intent_id")).toEqual([fake.sessions.get(own.sessionId)!.payment_intent]);
    expect(await invoiceBalance(db, invoiceId)).toMatchObject({ paidCents: TOTAL, balanceCents: 0 });
    expect((await invoice(invoiceId)).status).toBe("paid");
  });
});

describe("voiding an invoice", () => {
  it("expires its open session at Stripe, and the checkout page then takes no money", async () => {
    const { invoiceId } = await anInvoice(db, TOTAL);
    const started = await start(invoiceId);
    await voidInvoice(db, { invoiceId, reason: "Entered twice", actorUserId: office }, { stripe });
    expect((await invoice(invoiceId)).status).toBe("void");
    expect(fake.sessions.get(started.sessionId)).toMatchObject({ status: "expired", url: null });
    expect(await db("checkout_sessions").where({ id: started.sessionId }).first("status")).toEqual({ status: "expired" });
    const expired = await db("audit_log").where({ action: "invoice.checkout_expired", entity_id: String(invoiceId) }).first();
    expect(expired).toMatchObject({ actor_user_id: office, entity_type: "invoice" });
    expect(expired!.after).toMatchObject({ stripeCheckoutSessionId: started.sessionId, status: "expired", why: "void" });

    const before = fake.events.filter((e) => e.type === "checkout.session.completed").length;
    const page = await fetch(`${fake.url}/pay/${started.sessionId}`, { method: "POST", body: new URLSearchParams({ card: "4242424242424242" }), redirect: "manual" });
    expect(page.status).toBe(410);
    expect(await page.text()).toContain("This checkout has expired");
    await expect(fake.pay(started.sessionId)).rejects.toThrow(/expired/);
    expect(fake.events.filter((e) => e.type === "checkout.session.completed")).toHaveLength(before);
    expect(fake.sessions.get(started.sessionId)!.payment_intent).toBeNull();
  });

  it("is recorded with Stripe unreachable; a payment on the session left open is refunded, not recorded", async () => {
    const { invoiceId } = await anInvoice(db, TOTAL);
    const started = await start(invoiceId);
    await voidInvoice(db, { invoiceId, reason: "Wrong customer", actorUserId: office }, { stripe: offline });
    expect((await invoice(invoiceId)).status).toBe("void");
    expect(fake.sessions.get(started.sessionId)!.status).toBe("open");

    const completed = await fake.pay(started.sessionId);
    const pi = fake.sessions.get(started.sessionId)!.payment_intent!;
    expect(await deliver(completed)).toMatchObject({ handled: true, refused: "invoice_not_open" });
    expect(await deliver(completed)).toMatchObject({ duplicate: true });
    for (const event of await refundEvents(pi)) expect(await deliver(event)).toMatchObject({ duplicate: false });

    expect(await db("payments").where({ invoice_id: invoiceId }).pluck("id")).toEqual([]);
    expect(refundsAtStripe(pi).map((r) => r.amount)).toEqual([TOTAL]);
    expect((await invoice(invoiceId)).status).toBe("void");
    expect(await db("card_payment_refusals").where({ payment_intent_id: pi }).first("reason", "amount_cents", "invoice_id")).toEqual({ reason: "invoice_not_open", amount_cents: TOTAL, invoice_id: invoiceId });
    const audits = await refusals(invoiceId);
    expect(audits).toHaveLength(1);
    expect(audits[0].after).toMatchObject({ reason: "invoice_not_open", invoiceStatus: "void", stripeRefundId: refundsAtStripe(pi)[0].id });
  });

  it("refuses the payment when a partial Stripe refund is the first event heard of it, and gives back the rest", async () => {
    const { invoiceId } = await anInvoice(db, TOTAL);
    const started = await start(invoiceId);
    const completed = await fake.pay(started.sessionId); // paid as the office voids; the webhook is late
    await voidInvoice(db, { invoiceId, reason: "Customer cancelled", actorUserId: office }, { stripe });
    const pi = fake.sessions.get(started.sessionId)!.payment_intent!;
    await stripe.refunds.create({ payment_intent: pi, amount: 1_000 }); // someone refunds a part in Stripe
    const [partial] = await refundEvents(pi);

    expect(await deliver(partial)).toMatchObject({ refused: "invoice_not_open" });
    expect(await deliver(completed)).toMatchObject({ handled: true, refused: "invoice_not_open" });
    expect(refundsAtStripe(pi).map((r) => r.amount)).toEqual([1_000, TOTAL - 1_000]);
    expect(await db("payments").pluck("id")).toEqual([]);
    expect(await db("refunds").pluck("id")).toEqual([]);
    expect((await invoice(invoiceId)).status).toBe("void");
  });
});

describe("a change of balance", () => {
  it("an office payment expires the old session; the next start makes one for the new balance", async () => {
    const { invoiceId } = await anInvoice(db, TOTAL);
    const first = await start(invoiceId);
    const cash = await recordOfficePayment(db, { invoiceId, amountCents: 1_000, method: "cash", reference: null, actorUserId: office }, { stripe });
    expect(cash.balanceCents).toBe(TOTAL - 1_000);
    expect(fake.sessions.get(first.sessionId)!.status).toBe("expired");

    const second = await start(invoiceId);
    expect(second.sessionId).not.toBe(first.sessionId);
    expect(second.amountCents).toBe(TOTAL - 1_000);
    expect(fake.sessions.get(second.sessionId)).toMatchObject({ status: "open", amount_total: TOTAL - 1_000 });
    expect(sessionsAtStripe(invoiceId).filter((s) => s.status === "open").map((s) => s.id)).toEqual([second.sessionId]);
    expect((await invoice(invoiceId)).stripe_checkout_session_id).toBe(second.sessionId);

    // A refund of the cash grows the balance again: that session goes too.
    await refundPayment(db, { paymentId: cash.paymentId, amountCents: 1_000, reason: "Paid by card instead", actorUserId: office }, { stripe });
    expect(fake.sessions.get(second.sessionId)!.status).toBe("expired");
    const third = await start(invoiceId);
    expect(third.amountCents).toBe(TOTAL);
    expect(sessionsAtStripe(invoiceId).filter((s) => s.status === "open").map((s) => s.id)).toEqual([third.sessionId]);
    expect(await db("checkout_sessions").where({ invoice_id: invoiceId }).orderBy("created_at").pluck("status")).toEqual(["expired", "expired", "open"]);
  });
});

describe("money the invoice may not take", () => {
  it("a stale session paid for more than the balance is refunded in full, not recorded", async () => {
    const { invoiceId } = await anInvoice(db, TOTAL);
    const stale = await start(invoiceId);
    // The office takes cash while Stripe is unreachable: the old session stays open.
    await recordOfficePayment(db, { invoiceId, amountCents: 5_000, method: "cash", reference: null, actorUserId: office }, { stripe: offline });
    expect(fake.sessions.get(stale.sessionId)!.status).toBe("open");

    const completed = await fake.pay(stale.sessionId);
    const pi = fake.sessions.get(stale.sessionId)!.payment_intent!;
    expect(await deliver(completed)).toMatchObject({ handled: true, refused: "over_balance" });
    expect(refundsAtStripe(pi).map((r) => r.amount)).toEqual([TOTAL]);
    expect(await db("payments").where({ invoice_id: invoiceId }).pluck("method")).toEqual(["cash"]);
    const money = await invoiceBalance(db, invoiceId);
    expect(money).toEqual({ totalCents: TOTAL, paidCents: 5_000, refundedCents: 0, balanceCents: TOTAL - 5_000 });
    expect(money.paidCents - money.refundedCents).toBeLessThanOrEqual(money.totalCents);
    expect((await invoice(invoiceId)).status).toBe("open");
    const [audit] = await refusals(invoiceId);
    expect(audit.after).toMatchObject({ reason: "over_balance", amountCents: TOTAL, balanceCents: TOTAL - 5_000 });

    // The customer can pay what is owed with a new session.
    const again = await start(invoiceId);
    expect(again).toMatchObject({ amountCents: TOTAL - 5_000 });
    expect(again.sessionId).not.toBe(stale.sessionId);
  });

  it("a session paid in another currency than the invoice's is refunded, not recorded", async () => {
    const { invoiceId } = await anInvoice(db, TOTAL);
    const started = await start(invoiceId);
    // The invoice is re-issued in Canadian dollars after the checkout was opened in US dollars.
    await db("invoices").where({ id: invoiceId }).update({ currency: "cad" });
    const completed = await fake.pay(started.sessionId);
    const pi = fake.sessions.get(started.sessionId)!.payment_intent!;
    expect(await deliver(completed)).toMatchObject({ handled: true, refused: "currency_mismatch" });
    expect(refundsAtStripe(pi).map((r) => [r.amount, r.currency])).toEqual([[TOTAL, "usd"]]);
    expect(await db("payments").pluck("id")).toEqual([]);
    expect((await invoice(invoiceId)).status).toBe("open");
    const [audit] = await refusals(invoiceId);
    expect(audit.after).toMatchObject({ reason: "currency_mismatch", currency: "usd", invoiceCurrency: "cad" });
  });
});

describe("the fake Stripe server", () => {
  it("expires an open session once, Stripe's way, and lists sessions by payment intent", async () => {
    const { invoiceId } = await anInvoice(db, TOTAL);
    const started = await start(invoiceId);
    const expired = await stripe.checkout.sessions.expire(started.sessionId);
    expect(expired).toMatchObject({ id: started.sessionId, object: "checkout.session", status: "expired", url: null, payment_status: "unpaid" });
    await expect(stripe.checkout.sessions.expire(started.sessionId)).rejects.toMatchObject({ type: "StripeInvalidRequestError" });
    await new Promise((r) => setImmediate(r));
    expect(fake.events.some((e) => e.type === "checkout.session.expired" && (e.data.object as { id: string }).id === started.sessionId)).toBe(true);
    expect((await fetch(`${fake.url}/pay/${started.sessionId}`)).status).toBe(200);

    const next = await start(invoiceId);
    await fake.pay(next.sessionId);
    const pi = fake.sessions.get(next.sessionId)!.payment_intent!;
    const listed = await stripe.checkout.sessions.list({ payment_intent: pi, limit: 1 });
    expect(listed).toMatchObject({ object: "list", has_more: false });
    expect(listed.data.map((s) => s.id)).toEqual([next.sessionId]);
  });

  it("answers a repeated refund with the same idempotency key once", async () => {
    const { invoiceId } = await anInvoice(db, TOTAL);
    const started = await start(invoiceId);
    await fake.pay(started.sessionId);
    const pi = fake.sessions.get(started.sessionId)!.payment_intent!;
    const first = await stripe.refunds.create({ payment_intent: pi }, { idempotencyKey: `key-${pi}` });
    const again = await stripe.refunds.create({ payment_intent: pi }, { idempotencyKey: `key-${pi}` });
    expect(again.id).toBe(first.id);
    expect(refundsAtStripe(pi)).toHaveLength(1);
    await expect(stripe.refunds.create({ payment_intent: pi })).rejects.toThrow(/already been refunded/);
  });
});

describe("over HTTP, as the fake delivers events", () => {
  it("refunds a payment on a void invoice, and the refund's own event, arriving meanwhile, records nothing", async () => {
    const http = await import("node:http");
    const answers: string[] = [];
    // Stands in for /api/stripe/webhook: raw body + Stripe-Signature header; 500 asks for a retry.
    const receiver = http.createServer((req, res) => {
      const chunks: Buffer[] = [];
      req.on("data", (c: Buffer) => chunks.push(c));
      req.on("end", () => {
        handleStripeWebhook(db, { rawBody: Buffer.concat(chunks).toString("utf8"), signature: (req.headers["stripe-signature"] as string) ?? null }, { stripe: liveStripe, webhookSecret: SECRET }).then(
          (o) => (answers.push(`${o.type} ${o.refused ?? (o.handled ? "handled" : "ignored")}`), res.writeHead(200).end("{}")),
          (e: unknown) => (answers.push(`error ${e instanceof Error ? e.message : String(e)}`), res.writeHead(500).end()),
        );
      });
    });
    await new Promise<void>((r) => receiver.listen(0, "127.0.0.1", r));
    const port = (receiver.address() as { port: number }).port;
    const live = await startStripeFake({ port: 0, webhookSecret: SECRET, webhookUrl: `http://127.0.0.1:${port}/api/stripe/webhook`, log: () => {} });
    const liveStripe = createStripeClient({ secretKey: "sk_test_varroute", webhookSecret: SECRET, api: { host: "127.0.0.1", port: live.port, protocol: "http" }, local: true });
    try {
      const { invoiceId } = await anInvoice(db, TOTAL);
      const started = await startCardPayment(db, { invoiceId, ...urls }, { stripe: liveStripe, webhookSecret: SECRET });
      await voidInvoice(db, { invoiceId, reason: "Wrong customer", actorUserId: office }, { stripe: offline }); // the session stays open
      const res = await fetch(`${live.url}/pay/${started.sessionId}`, { method: "POST", body: new URLSearchParams({ card: "4242424242424242" }), redirect: "manual" });
      expect(res.status).toBe(303);
      const pi = live.sessions.get(started.sessionId)!.payment_intent!;
      // The refund.created event follows the refund; wait for the receiver to answer it.
      for (let i = 0; i < 100 && answers.length < 2; i++) await new Promise((r) => setTimeout(r, 20));
      // The refund's event finds the refusal (waiting on the invoice's lock if it came in first) and records nothing.
      expect(answers[0]).toBe("checkout.session.completed invoice_not_open");
      expect(answers[1]).toMatch(/^refund\.created (invoice_not_open|ignored)$/);
      expect(answers).toHaveLength(2);
      expect([...live.refunds.values()].filter((r) => r.payment_intent === pi).map((r) => r.amount)).toEqual([TOTAL]);
      expect(await db("payments").pluck("id")).toEqual([]);
      expect(await db("refunds").pluck("id")).toEqual([]);
      expect((await invoice(invoiceId)).status).toBe("void");
    } finally {
      await live.stop();
      await new Promise((r) => receiver.close(r));
    }
  });
});
