import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import {
  handleStripeWebhook,
  PAYMENT_UNAVAILABLE_MESSAGE,
  PaymentUnavailable,
  refundPayment,
  startCardPayment,
  WebhookRejected,
} from "~/models/payments.server";
import { db } from "~/services/db.server";
import { type FakeEvent, type StripeFake, startStripeFake, stripeSignatureHeader } from "~/services/stripe-fake/server";
import { createStripeClient, type Stripe } from "~/services/stripe.server";
import { anInvoice, anOfficeUser } from "./payment-fixtures";
import { resetDatabase } from "./reset-database";

// The fake Stripe server runs in this process on a free port; it keeps its events instead of
// POSTing them (no app server here), and the test delivers them to handleStripeWebhook.
const SECRET = "whsec_test_webhook_secret";
let fake: StripeFake;
let stripe: Stripe;
const deps = () => ({ stripe, webhookSecret: SECRET });

beforeAll(async () => {
  fake = await startStripeFake({ port: 0, webhookSecret: SECRET, webhookUrl: null, log: () => {} });
  stripe = createStripeClient({ secretKey: "sk_test_varroute", webhookSecret: SECRET, api: { host: "127.0.0.1", port: fake.port, protocol: "http" }, local: true });
});
afterAll(async () => {
  await fake.stop();
  await db.destroy();
});
beforeEach(async () => {
  await resetDatabase(db);
});

function deliver(event: FakeEvent, signature?: string) {
  const rawBody = JSON.stringify(event);
  return handleStripeWebhook(db, { rawBody, signature: signature ?? fake.sign(rawBody) }, deps());
}

async function invoice(id: number) {
  return (await db("invoices").where({ id }).first())!;
}

async function paidThroughCheckout(totalCents: number) {
  const { invoiceId, customerId } = await anInvoice(db, totalCents);
  const start = await startCardPayment(db, { invoiceId, successUrl: "http://app.test/paid?session={CHECKOUT_SESSION_ID}", cancelUrl: "http://app.test/cancel" }, deps());
  const completed = await fake.pay(start.sessionId);
  return { invoiceId, customerId, start, completed };
}

describe("startCardPayment", () => {
  it("makes a Stripe customer and a Checkout Session for the balance, and reuses both", async () => {
    const { invoiceId, customerId } = await anInvoice(db, 12_345);
    const start = await startCardPayment(db, { invoiceId, successUrl: "http://app.test/ok", cancelUrl: "http://app.test/cancel" }, deps());
    expect(start.url).toBe(`${fake.url}/pay/${start.sessionId}`);
    expect(start.sessionId).toMatch(/^cs_test_/);
    expect(start.amountCents).toBe(12_345);
    const customer = (await db("customers").where({ id: customerId }).first())!;
    expect(customer.stripe_customer_id).toMatch(/^cus_/);
    expect(fake.sessions.get(start.sessionId)).toMatchObject({ amount_total: 12_345, currency: "usd", customer: customer.stripe_customer_id, metadata: { invoiceId: String(invoiceId) } });
    expect((await invoice(invoiceId)).stripe_checkout_session_id).toBe(start.sessionId);

    const again = await startCardPayment(db, { invoiceId, successUrl: "http://app.test/ok", cancelUrl: "http://app.test/cancel" }, deps());
    expect(again.sessionId).toBe(start.sessionId);
    expect(fake.customers.size).toBeGreaterThanOrEqual(1);
    expect([...fake.customers.values()].filter((c) => c.metadata.customerId === String(customerId))).toHaveLength(1);
  });

  it("with the Stripe server stopped, says to try again and leaves the invoice open", async () => {
    const down = await startStripeFake({ port: 0, webhookSecret: SECRET, webhookUrl: null, log: () => {} });
    const port = down.port;
    await down.stop();
    const offline = createStripeClient({ secretKey: "sk_test_varroute", webhookSecret: SECRET, api: { host: "127.0.0.1", port, protocol: "http" }, local: true });
    const { invoiceId } = await anInvoice(db, 5_000);
    const error = await startCardPayment(db, { invoiceId, successUrl: "http://app.test/ok", cancelUrl: "http://app.test/cancel" }, { stripe: offline, webhookSecret: SECRET }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(PaymentUnavailable);
    expect((error as Error).message).toBe(PAYMENT_UNAVAILABLE_MESSAGE);
    const row = await invoice(invoiceId);
    expect(row.status).toBe("open");
    expect(row.stripe_checkout_session_id).toBeNull();
    expect(await db("payments").pluck("id")).toEqual([]);
  });
});

describe("handleStripeWebhook", () => {
  it("refuses a bad signature and changes nothing", async () => {
    const { invoiceId, completed } = await paidThroughCheckout(7_000);
    const rawBody = JSON.stringify(completed);
    const forged = stripeSignatureHeader(rawBody, "whsec_someone_else");
    await expect(handleStripeWebhook(db, { rawBody, signature: forged }, deps())).rejects.toThrow(WebhookRejected);
    await expect(handleStripeWebhook(db, { rawBody, signature: null }, deps())).rejects.toThrow(WebhookRejected);
    // Signed, then tampered with.
    const good = fake.sign(rawBody);
    await expect(handleStripeWebhook(db, { rawBody: rawBody.replace("7000", "1"), signature: good }, deps())).rejects.toThrow(WebhookRejected);
    expect((await invoice(invoiceId)).status).toBe("open");
    expect(await db("payments").pluck("id")).toEqual([]);
    expect(await db("webhook_events").pluck("id")).toEqual([]);
  });

  it("records one payment when the same event arrives twice, and marks the invoice paid", async () => {
    const { invoiceId, completed } = await paidThroughCheckout(9_900);
    expect(completed.type).toBe("checkout.session.completed");
    const first = await deliver(completed);
    const second = await deliver(completed);
    expect(first).toMatchObject({ duplicate: false, handled: true });
    expect(second).toMatchObject({ duplicate: true });
    const payments = await db("payments").where({ invoice_id: invoiceId });
    expect(payments).toHaveLength(1);
    expect(payments[0]).toMatchObject({ method: "card", amount_cents: 9_900 });
    expect(payments[0].stripe_payment_intent_id).toMatch(/^pi_/);
    expect((await invoice(invoiceId)).status).toBe("paid");
    expect(await db("webhook_events").pluck("id")).toEqual([completed.id]);
  });

  it("records one payment when the same event is delivered twice at once", async () => {
    const { invoiceId, completed } = await paidThroughCheckout(4_200);
    const outcomes = await Promise.all([deliver(completed), deliver(completed), deliver(completed)]);
    expect(outcomes.filter((o) => !o.duplicate)).toHaveLength(1);
    expect(await db("payments").where({ invoice_id: invoiceId }).pluck("amount_cents")).toEqual([4_200]);
  });

  it("ends refunded when the refund event arrives before the payment event", async () => {
    const office = await anOfficeUser(db);
    const { invoiceId, completed } = await paidThroughCheckout(15_000);
    const piId = fake.sessions.get((completed.data.object as { id: string }).id)!.payment_intent!;
    const refund = await stripe.refunds.create({ payment_intent: piId, amount: 15_000 });
    await new Promise((r) => setImmediate(r));
    const refunded = fake.events.find((e) => e.type === "refund.created" && (e.data.object as { id: string }).id === refund.id)!;
    expect(refunded).toBeDefined();

    await deliver(refunded); // out of order: the payment is learnt from the payment intent
    expect((await invoice(invoiceId)).status).toBe("refunded");
    await deliver(completed); // late: changes nothing
    await deliver(refunded); // repeated
    expect((await invoice(invoiceId)).status).toBe("refunded");
    expect(await db("payments").where({ invoice_id: invoiceId }).pluck("amount_cents")).toEqual([15_000]);
    expect(await db("refunds").pluck("stripe_refund_id")).toEqual([refund.id]);

    // Nothing is left to refund, in Stripe or here.
    const payment = (await db("payments").where({ invoice_id: invoiceId }).first())!;
    await expect(refundPayment(db, { paymentId: payment.id, amountCents: 1, reason: "again", actorUserId: office }, deps())).rejects.toThrow("left to refund");
    await expect(stripe.refunds.create({ payment_intent: piId, amount: 1 })).rejects.toThrow(/already been refunded/);
  });

  it("refunds a card payment through Stripe; the refund webhook then finds it recorded", async () => {
    const office = await anOfficeUser(db);
    const { invoiceId, completed } = await paidThroughCheckout(10_000);
    await deliver(completed);
    const payment = (await db("payments").where({ invoice_id: invoiceId }).first())!;
    await expect(refundPayment(db, { paymentId: payment.id, amountCents: 10_001, reason: "Too much", actorUserId: office }, deps())).rejects.toThrow("left to refund");

    const partial = await refundPayment(db, { paymentId: payment.id, amountCents: 2_500, reason: "One colony was a dead-out", actorUserId: office }, deps());
    expect(partial.status).toBe("paid");
    const rest = await refundPayment(db, { paymentId: payment.id, amountCents: 7_500, reason: "Customer cancelled", actorUserId: office }, deps());
    expect(rest.status).toBe("refunded");
    await new Promise((r) => setImmediate(r));
    for (const event of fake.events.filter((e) => e.type === "refund.created")) await deliver(event);
    const refunds = await db("refunds").where({ payment_id: payment.id }).orderBy("id");
    expect(refunds.map((r) => [r.amount_cents, r.reason, r.created_by])).toEqual([
      [2_500, "One colony was a dead-out", office],
      [7_500, "Customer cancelled", office],
    ]);
    expect([...fake.refunds.values()].filter((r) => r.payment_intent === payment.stripe_payment_intent_id).map((r) => r.amount)).toEqual([2_500, 7_500]);
    expect((await invoice(invoiceId)).status).toBe("refunded");
  });
});

describe("the fake's hosted checkout page", () => {
  it("shows a Pay button and a Cancel link, and on Pay completes the session and redirects", async () => {
    const { invoiceId } = await anInvoice(db, 2_550);
    const start = await startCardPayment(db, { invoiceId, successUrl: "http://app.test/paid?session={CHECKOUT_SESSION_ID}", cancelUrl: "http://app.test/cancel" }, deps());
    const sessionId = start.sessionId;
    const html = await (await fetch(start.url)).text();
    expect(html).toContain("<button type=\"submit\">Pay $25.50</button>");
    expect(html).toContain('<a href="http://app.test/cancel">Cancel</a>');
    expect(html).toContain('<label for="card">Card number</label>');

    const before = fake.events.length;
    const res = await fetch(start.url, { method: "POST", body: new URLSearchParams({ card: "4242 4242 4242 4242" }), redirect: "manual" });
    expect(res.status).toBe(303);
    expect(res.headers.get("location")).toBe(`http://app.test/paid?session=${sessionId}`);
    const event = fake.events[before];
    expect(event.type).toBe("checkout.session.completed");
    expect(await deliver(event)).toMatchObject({ handled: true });
    expect((await invoice(invoiceId)).status).toBe("paid");
    expect((await stripe.checkout.sessions.retrieve(sessionId)).payment_status).toBe("paid");
  });
});

describe("webhook delivery over HTTP", () => {
  it("the fake POSTs a signed checkout.session.completed that the handler accepts before redirecting", async () => {
    const http = await import("node:http");
    const answers: number[] = [];
    // Stands in for the app's /api/stripe/webhook route: raw body + Stripe-Signature header.
    const receiver = http.createServer((req, res) => {
      const chunks: Buffer[] = [];
      req.on("data", (c: Buffer) => chunks.push(c));
      req.on("end", () => {
        handleStripeWebhook(db, { rawBody: Buffer.concat(chunks).toString("utf8"), signature: (req.headers["stripe-signature"] as string) ?? null }, deps()).then(
          () => (answers.push(200), res.writeHead(200).end('{"received":true}')),
          (e: unknown) => (answers.push(e instanceof WebhookRejected ? 400 : 500), res.writeHead(e instanceof WebhookRejected ? 400 : 500).end()),
        );
      });
    });
    await new Promise<void>((r) => receiver.listen(0, "127.0.0.1", r));
    const port = (receiver.address() as { port: number }).port;
    const live = await startStripeFake({ port: 0, webhookSecret: SECRET, webhookUrl: `http://127.0.0.1:${port}/api/stripe/webhook`, log: () => {} });
    try {
      const liveStripe = createStripeClient({ secretKey: "sk_test_varroute", webhookSecret: SECRET, api: { host: "127.0.0.1", port: live.port, protocol: "http" }, local: true });
      const { invoiceId } = await anInvoice(db, 3_300);
      const start = await startCardPayment(db, { invoiceId, successUrl: "http://app.test/paid", cancelUrl: "http://app.test/cancel" }, { stripe: liveStripe, webhookSecret: SECRET });
      const res = await fetch(start.url, { method: "POST", body: new URLSearchParams({ card: "4242424242424242" }), redirect: "manual" });
      expect(res.status).toBe(303);
      expect(answers).toEqual([200]);
      expect((await invoice(invoiceId)).status).toBe("paid");
    } finally {
      await live.stop();
      await new Promise((r) => receiver.close(r));
    }
  });
});
