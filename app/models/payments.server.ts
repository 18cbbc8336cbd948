import type { Knex } from "knex";
import type Stripe from "stripe";
import { formatDollars } from "~/domain/billing";
import type { InvoiceRow, PaymentRow } from "./tables";
import { requestEmailDelivery } from "~/services/jobs.server";
import { stripeClient, stripeConfig } from "~/services/stripe.server";
import { queueReceiptEmail } from "./receipts.server";

// Money in: card payments through Stripe Checkout (confirmed only by a signed webhook),
// cash and cheque recorded by the office; money out: refunds (card through Stripe, cash and
// cheque recorded only). Every write leaves an audit_log entry.
//
// Invoice status from its payments and refunds (void invoices are never changed here):
//   paid      — payments add up to the total or more, and not all of it was refunded
//   refunded  — it was paid in full and every cent was refunded
//   open      — otherwise (unpaid or partly paid); the balance is total − (paid − refunded)
// A partial refund of a paid invoice keeps it paid: the refund is money given back by
// agreement, not a debt reopened.
//
// Webhooks: each event id is inserted into webhook_events in the same transaction as its
// effect, so a repeated event does nothing; payments and refunds are keyed by Stripe's ids
// (unique columns), and the status is recomputed from the rows, so events in any order end
// in one correct state. A refund event for a payment not recorded yet records the payment
// first from the payment intent (its metadata carries the invoice id).
//
// Receipts: every payment recorded here (a new card payment from a webhook, an office cash
// or cheque payment) queues its receipt e-mail in the same transaction (receipts.server.ts,
// once per payment); delivery is requested after commit.

export const PAYMENT_UNAVAILABLE_MESSAGE = "Online payment is not available right now. Please try again in a few minutes.";

export class PaymentUnavailable extends Error {
  constructor(readonly cause?: unknown) {
    super(PAYMENT_UNAVAILABLE_MESSAGE);
    this.name = "PaymentUnavailable";
  }
}

/** A payment or refund that cannot be made as asked; the message is for the person. */
export class PaymentRefused extends Error {
  constructor(message: string) {
    super(message);
    this.name = "PaymentRefused";
  }
}

/** A webhook that is not from Stripe (bad or missing signature, unreadable body): answer 400. */
export class WebhookRejected extends Error {
  constructor(message: string) {
    super(message);
    this.name = "WebhookRejected";
  }
}

type Deps = { stripe?: Stripe; webhookSecret?: string };

export type InvoiceMoney = { totalCents: number; paidCents: number; refundedCents: number; balanceCents: number };

async function invoiceMoney(db: Knex, invoice: Pick<InvoiceRow, "id" | "total_cents">): Promise<InvoiceMoney> {
  const paid = await db("payments").where({ invoice_id: invoice.id }).first(db.raw("coalesce(sum(amount_cents), 0)::int as cents"));
  const refunded = await db("refunds")
    .join("payments", "payments.id", "refunds.payment_id")
    .where("payments.invoice_id", invoice.id)
    .first(db.raw("coalesce(sum(refunds.amount_cents), 0)::int as cents"));
  const paidCents = Number((paid as unknown as { cents: number }).cents);
  const refundedCents = Number((refunded as unknown as { cents: number }).cents);
  return { totalCents: invoice.total_cents, paidCents, refundedCents, balanceCents: Math.max(0, invoice.total_cents - (paidCents - refundedCents)) };
}

/** Money on an invoice: total, paid, refunded, and the balance still owed. */
export async function invoiceBalance(db: Knex, invoiceId: number): Promise<InvoiceMoney> {
  const invoice = await db("invoices").where({ id: invoiceId }).first("id", "total_cents");
  if (!invoice) throw new PaymentRefused(`There is no invoice ${invoiceId}.`);
  return invoiceMoney(db, invoice);
}

export function statusFromMoney(current: InvoiceRow["status"], money: InvoiceMoney): InvoiceRow["status"] {
  if (current === "void") return "void";
  if (money.paidCents > 0 && money.paidCents >= money.totalCents) return money.refundedCents >= money.paidCents ? "refunded" : "paid";
  return "open";
}

/** Recomputes the invoice's status from its rows (the invoice row is locked); audits a change. */
async function settleInvoice(trx: Knex.Transaction, invoiceId: number, actorUserId: number | null): Promise<InvoiceRow["status"]> {
  const invoice = await trx("invoices").where({ id: invoiceId }).forUpdate().first();
  if (!invoice) throw new PaymentRefused(`There is no invoice ${invoiceId}.`);
  const money = await invoiceMoney(trx, invoice);
  const status = statusFromMoney(invoice.status, money);
  if (status !== invoice.status) {
    await trx("invoices").where({ id: invoiceId }).update({ status, updated_at: trx.fn.now() });
    await audit(trx, actorUserId, "invoice.status", "invoice", invoiceId, { status: invoice.status }, { status, ...money });
  }
  return status;
}

async function audit(trx: Knex, actorUserId: number | null, action: string, entityType: string, entityId: number | string, before: unknown, after: unknown) {
  await trx("audit_log").insert({
    actor_user_id: actorUserId,
    action,
    entity_type: entityType,
    entity_id: String(entityId),
    before: before === null ? null : JSON.stringify(before),
    after: after === null ? null : JSON.stringify(after),
  });
}

function isStripeError(error: unknown): error is Stripe.errors.StripeError {
  return typeof error === "object" && error !== null && "type" in error && typeof (error as { type: unknown }).type === "string" && String((error as { type: string }).type).startsWith("Stripe");
}

/** Stripe down, unreachable, rate-limited or misconfigured → PaymentUnavailable; the rest passes through. */
function unavailable(error: unknown): never {
  if (isStripeError(error) && error.type !== "StripeInvalidRequestError" && error.type !== "StripeCardError") {
    console.error(`[payments] Stripe unavailable: ${error.type}: ${error.message}`);
    throw new PaymentUnavailable(error);
  }
  throw error;
}

// --- Card payment: Checkout ----------------------------------------------------------------

export type CardPaymentStart = { url: string; sessionId: string; amountCents: number };

/**
 * A Checkout Session for the invoice's open balance (reusing the invoice's open session for
 * the same amount), with the customer's Stripe customer made on first use. Returns the hosted
 * page's URL. Nothing is marked paid here: only the signed webhook does that.
 */
export async function startCardPayment(
  db: Knex,
  input: { invoiceId: number; successUrl: string; cancelUrl: string; actorUserId?: number | null },
  deps: Deps = {},
): Promise<CardPaymentStart> {
  const stripe = deps.stripe ?? stripeClient();
  const invoice = await db("invoices").where({ id: input.invoiceId }).first();
  if (!invoice) throw new PaymentRefused(`There is no invoice ${input.invoiceId}.`);
  if (invoice.status !== "open") throw new PaymentRefused(`Invoice ${invoice.number} is ${invoice.status}; there is nothing to pay.`);
  const money = await invoiceMoney(db, invoice);
  if (money.balanceCents <= 0) throw new PaymentRefused(`Invoice ${invoice.number} has nothing left to pay.`);
  const customer = await db("customers").where({ id: invoice.customer_id }).first();
  if (!customer) throw new PaymentRefused(`Invoice ${invoice.number} has no customer.`);

  try {
    if (invoice.stripe_checkout_session_id) {
      const existing = await stripe.checkout.sessions.retrieve(invoice.stripe_checkout_session_id).catch((error: unknown) => {
        if (isStripeError(error) && error.type === "StripeInvalidRequestError") return null; // gone: make a new one
        throw error;
      });
      if (existing && existing.status === "open" && existing.amount_total === money.balanceCents && existing.url) {
        return { url: existing.url, sessionId: existing.id, amountCents: money.balanceCents };
      }
    }

    let stripeCustomerId = customer.stripe_customer_id;
    if (!stripeCustomerId) {
      const created = await stripe.customers.create(
        { email: customer.email, name: customer.name, metadata: { customerId: String(customer.id) } },
        { idempotencyKey: `varroute-customer-${customer.id}` },
      );
      await db("customers").where({ id: customer.id }).whereNull("stripe_customer_id").update({ stripe_customer_id: created.id, updated_at: db.fn.now() });
      stripeCustomerId = (await db("customers").where({ id: customer.id }).first("stripe_customer_id"))!.stripe_customer_id ?? created.id;
    }

    const metadata = { invoiceId: String(invoice.id), invoiceNumber: invoice.number };
    const session = await stripe.checkout.sessions.create({
      mode: "payment",
      customer: stripeCustomerId,
      client_reference_id: String(invoice.id),
      line_items: [
        {
          quantity: 1,
          price_data: {
            currency: invoice.currency,
            unit_amount: money.balanceCents,
            product_data: { name: `Invoice ${invoice.number}` },
          },
        },
      ],
      metadata,
      payment_intent_data: { metadata },
      success_url: input.successUrl,
      cancel_url: input.cancelUrl,
    });
    if (!session.url) throw new Error("Stripe returned a Checkout Session without a URL.");

    await db.transaction(async (trx) => {
      await trx("invoices").where({ id: invoice.id }).update({ stripe_checkout_session_id: session.id, updated_at: trx.fn.now() });
      await audit(trx, input.actorUserId ?? null, "invoice.checkout_session", "invoice", invoice.id, { stripeCheckoutSessionId: invoice.stripe_checkout_session_id }, {
        stripeCheckoutSessionId: session.id,
        amountCents: money.balanceCents,
      });
    });
    return { url: session.url, sessionId: session.id, amountCents: money.balanceCents };
  } catch (error) {
    unavailable(error);
  }
}

// --- Webhooks ------------------------------------------------------------------------------

/** emailIds: the e-mails this event queued (receipts); their delivery is requested after commit. */
export type WebhookOutcome = { eventId: string; type: string; duplicate: boolean; handled: boolean; emailIds: number[] };

type SessionShape = { id: string; payment_intent: string | { id: string } | null; payment_status: string; amount_total: number | null; metadata: Record<string, string> | null; client_reference_id: string | null };
type RefundShape = { id: string; amount: number; payment_intent: string | { id: string } | null; status: string | null; reason: string | null; metadata?: Record<string, string> | null };

function idOf(value: string | { id: string } | null): string | null {
  return typeof value === "string" ? value : (value?.id ?? null);
}

function invoiceIdFrom(metadata: Record<string, string> | null | undefined, fallback?: string | null): number | null {
  const text = metadata?.invoiceId ?? fallback ?? null;
  return text && /^\d+$/.test(text) ? Number(text) : null;
}

/**
 * Records a card payment once (keyed by payment intent), settles the invoice and queues the
 * receipt; receiptEmailId is null when the payment was recorded before (or no receipt goes).
 */
async function recordCardPayment(
  trx: Knex.Transaction,
  p: { invoiceId: number; paymentIntentId: string; amountCents: number; via: string },
): Promise<{ payment: PaymentRow; receiptEmailId: number | null }> {
  const invoice = await trx("invoices").where({ id: p.invoiceId }).forUpdate().first("id");
  if (!invoice) throw new Error(`Stripe paid for invoice ${p.invoiceId}, which does not exist.`);
  const [inserted] = await trx("payments")
    .insert({ invoice_id: p.invoiceId, amount_cents: p.amountCents, method: "card", reference: p.paymentIntentId, stripe_payment_intent_id: p.paymentIntentId })
    .onConflict("stripe_payment_intent_id")
    .ignore()
    .returning("*");
  if (inserted) {
    await audit(trx, null, "payment.card", "payment", inserted.id, null, { invoiceId: p.invoiceId, amountCents: p.amountCents, stripePaymentIntentId: p.paymentIntentId, via: p.via });
    await settleInvoice(trx, p.invoiceId, null);
    return { payment: inserted, receiptEmailId: await queueReceiptEmail(trx, Number(inserted.id)) };
  }
  return { payment: (await trx("payments").where({ stripe_payment_intent_id: p.paymentIntentId }).first())!, receiptEmailId: null };
}

/** Records a Stripe refund once (keyed by refund id) and settles the invoice. */
async function recordStripeRefund(trx: Knex.Transaction, payment: PaymentRow, refund: { id: string; amountCents: number; reason: string; actorUserId: number | null }) {
  const [inserted] = await trx("refunds")
    .insert({ payment_id: payment.id, amount_cents: refund.amountCents, reason: refund.reason, stripe_refund_id: refund.id, created_by: refund.actorUserId })
    .onConflict("stripe_refund_id")
    .ignore()
    .returning("*");
  if (inserted) {
    await audit(trx, refund.actorUserId, "refund.card", "refund", inserted.id, null, { paymentId: payment.id, amountCents: refund.amountCents, stripeRefundId: refund.id, reason: refund.reason });
  }
  await settleInvoice(trx, payment.invoice_id, refund.actorUserId);
  return inserted ?? (await trx("refunds").where({ stripe_refund_id: refund.id }).first());
}

/**
 * Verifies and applies one Stripe webhook. Bad signature → WebhookRejected (nothing
 * changes). A repeated event id does nothing. Errors other than WebhookRejected mean
 * "try again later" (the route answers 500 and Stripe redelivers).
 */
export async function handleStripeWebhook(db: Knex, input: { rawBody: string | Buffer; signature: string | null }, deps: Deps = {}): Promise<WebhookOutcome> {
  const webhookSecret = deps.webhookSecret ?? stripeConfig().webhookSecret;
  const stripe = deps.stripe ?? stripeClient();
  if (!input.signature) throw new WebhookRejected("The Stripe-Signature header is missing.");
  let event: Stripe.Event;
  try {
    event = stripe.webhooks.constructEvent(input.rawBody, input.signature, webhookSecret);
  } catch (error) {
    throw new WebhookRejected(error instanceof Error ? error.message : "The webhook signature does not verify.");
  }

  // A refund for a payment not recorded yet (events out of order): learn the invoice from the
  // payment intent before the transaction, so no network call holds row locks.
  let intentForRefund: { id: string; invoiceId: number; amountCents: number } | null = null;
  if (event.type === "refund.created" || event.type === "refund.updated") {
    const refund = event.data.object as unknown as RefundShape;
    const piId = idOf(refund.payment_intent);
    if (piId && !(await db("payments").where({ stripe_payment_intent_id: piId }).first("id"))) {
      const pi = await stripe.paymentIntents.retrieve(piId);
      const invoiceId = invoiceIdFrom(pi.metadata);
      if (invoiceId !== null && pi.status === "succeeded") intentForRefund = { id: pi.id, invoiceId, amountCents: pi.amount_received };
    }
  }

  const outcome = await db.transaction(async (trx): Promise<WebhookOutcome> => {
    const [fresh] = await trx("webhook_events")
      .insert({ id: event.id, type: event.type, payload: JSON.stringify(event) })
      .onConflict("id")
      .ignore()
      .returning("id");
    if (!fresh) return { eventId: event.id, type: event.type, duplicate: true, handled: false, emailIds: [] };

    switch (event.type) {
      case "checkout.session.completed":
      case "checkout.session.async_payment_succeeded": {
        const session = event.data.object as unknown as SessionShape;
        const piId = idOf(session.payment_intent);
        const invoiceId = invoiceIdFrom(session.metadata, session.client_reference_id);
        if (session.payment_status !== "paid" || !piId || invoiceId === null || !session.amount_total) {
          return { eventId: event.id, type: event.type, duplicate: false, handled: false, emailIds: [] };
        }
        const { receiptEmailId } = await recordCardPayment(trx, { invoiceId, paymentIntentId: piId, amountCents: session.amount_total, via: event.type });
        return { eventId: event.id, type: event.type, duplicate: false, handled: true, emailIds: receiptEmailId === null ? [] : [receiptEmailId] };
      }
      case "refund.created":
      case "refund.updated": {
        const refund = event.data.object as unknown as RefundShape;
        const piId = idOf(refund.payment_intent);
        if (!piId || refund.status === "failed" || refund.status === "canceled") return { eventId: event.id, type: event.type, duplicate: false, handled: false, emailIds: [] };
        let payment = await trx("payments").where({ stripe_payment_intent_id: piId }).first();
        const emailIds: number[] = [];
        if (!payment && intentForRefund) {
          const recorded = await recordCardPayment(trx, { invoiceId: intentForRefund.invoiceId, paymentIntentId: piId, amountCents: intentForRefund.amountCents, via: event.type });
          payment = recorded.payment;
          if (recorded.receiptEmailId !== null) emailIds.push(recorded.receiptEmailId);
        }
        if (!payment) return { eventId: event.id, type: event.type, duplicate: false, handled: false, emailIds: [] };
        await recordStripeRefund(trx, payment, { id: refund.id, amountCents: refund.amount, reason: refund.metadata?.reason || refund.reason || "Refunded in Stripe", actorUserId: null });
        return { eventId: event.id, type: event.type, duplicate: false, handled: true, emailIds };
      }
      default:
        return { eventId: event.id, type: event.type, duplicate: false, handled: false, emailIds: [] };
    }
  });
  // After commit (a caller's transaction commits later: it requests delivery itself).
  if (!db.isTransaction) await requestEmailDelivery(outcome.emailIds);
  return outcome;
}

// --- Office: cash and cheque; refunds ------------------------------------------------------

/**
 * Records a cash or cheque payment taken by the office, settles the invoice and queues the
 * receipt (receiptEmailId, null when none goes); delivery is requested after commit.
 */
export async function recordOfficePayment(
  db: Knex,
  input: { invoiceId: number; amountCents: number; method: "cash" | "cheque"; reference?: string | null; actorUserId: number; receivedAt?: Date },
): Promise<{ paymentId: number; status: InvoiceRow["status"]; balanceCents: number; receiptEmailId: number | null }> {
  if (!Number.isSafeInteger(input.invoiceId) || input.invoiceId <= 0) throw new PaymentRefused(`There is no invoice ${input.invoiceId}.`);
  if (!Number.isSafeInteger(input.amountCents) || input.amountCents <= 0) throw new PaymentRefused("The amount must be more than $0.00.");
  if (input.method !== "cash" && input.method !== "cheque") throw new PaymentRefused("The office records cash or cheque payments only.");
  if (input.receivedAt !== undefined && !(input.receivedAt instanceof Date && Number.isFinite(input.receivedAt.getTime()))) {
    throw new PaymentRefused("The date received is not a valid date.");
  }
  const result = await db.transaction(async (trx) => {
    const invoice = await trx("invoices").where({ id: input.invoiceId }).forUpdate().first();
    if (!invoice) throw new PaymentRefused(`There is no invoice ${input.invoiceId}.`);
    if (invoice.status !== "open") throw new PaymentRefused(`Invoice ${invoice.number} is ${invoice.status}; it takes no more payments.`);
    const money = await invoiceMoney(trx, invoice);
    if (input.amountCents > money.balanceCents) {
      throw new PaymentRefused(`${formatDollars(input.amountCents)} is more than the ${formatDollars(money.balanceCents)} still owed on invoice ${invoice.number}.`);
    }
    const reference = input.reference?.trim() || null;
    const [payment] = await trx("payments")
      .insert({ invoice_id: invoice.id, amount_cents: input.amountCents, method: input.method, reference, recorded_by: input.actorUserId, received_at: input.receivedAt ?? trx.fn.now() })
      .returning("id");
    const paymentId = Number(payment.id);
    await audit(trx, input.actorUserId, "payment.record", "payment", paymentId, null, { invoiceId: invoice.id, amountCents: input.amountCents, method: input.method, reference });
    const status = await settleInvoice(trx, invoice.id, input.actorUserId);
    const receiptEmailId = await queueReceiptEmail(trx, paymentId);
    return { paymentId, status, balanceCents: money.balanceCents - input.amountCents, receiptEmailId };
  });
  if (result.receiptEmailId !== null && !db.isTransaction) await requestEmailDelivery([result.receiptEmailId]);
  return result;
}

/**
 * Refunds (part of) a payment. Card: through Stripe first (idempotent per payment and the
 * amount already refunded), then recorded — the refund.created webhook finds it recorded.
 * Cash and cheque: recorded only (the office hands the money back).
 */
export async function refundPayment(
  db: Knex,
  input: { paymentId: number; amountCents: number; reason: string; actorUserId: number },
  deps: Deps = {},
): Promise<{ refundId: number; status: InvoiceRow["status"] }> {
  const reason = input.reason.trim();
  if (!reason) throw new PaymentRefused("Give a reason for the refund.");
  if (!Number.isSafeInteger(input.amountCents) || input.amountCents <= 0) throw new PaymentRefused("The amount must be more than $0.00.");
  const payment = await db("payments").where({ id: input.paymentId }).first();
  if (!payment) throw new PaymentRefused(`There is no payment ${input.paymentId}.`);
  const refunded = await db("refunds").where({ payment_id: payment.id }).first(db.raw("coalesce(sum(amount_cents), 0)::int as cents"));
  const left = payment.amount_cents - Number((refunded as unknown as { cents: number }).cents);
  if (input.amountCents > left) throw new PaymentRefused(`${formatDollars(input.amountCents)} is more than the ${formatDollars(Math.max(0, left))} left to refund on this payment.`);

  if (payment.method === "card") {
    if (!payment.stripe_payment_intent_id) throw new PaymentRefused("This card payment has no Stripe payment intent to refund.");
    const stripe = deps.stripe ?? stripeClient();
    let refund: Stripe.Refund;
    try {
      refund = await stripe.refunds.create(
        { payment_intent: payment.stripe_payment_intent_id, amount: input.amountCents, metadata: { paymentId: String(payment.id), reason: reason.slice(0, 450) } },
        { idempotencyKey: `varroute-refund-${payment.id}-${payment.amount_cents - left}-${input.amountCents}` },
      );
    } catch (error) {
      if (isStripeError(error) && error.type === "StripeInvalidRequestError") throw new PaymentRefused(`Stripe refused the refund: ${error.message}`);
      unavailable(error);
    }
    return db.transaction(async (trx) => {
      await trx("invoices").where({ id: payment.invoice_id }).forUpdate().first("id");
      const row = await recordStripeRefund(trx, payment, { id: refund.id, amountCents: refund.amount, reason, actorUserId: input.actorUserId });
      const status = (await trx("invoices").where({ id: payment.invoice_id }).first("status"))!.status;
      return { refundId: Number(row!.id), status };
    });
  }

  return db.transaction(async (trx) => {
    await trx("invoices").where({ id: payment.invoice_id }).forUpdate().first("id");
    // Re-check under the lock: two refunds at once must not pass the payment's amount.
    const again = await trx("refunds").where({ payment_id: payment.id }).first(trx.raw("coalesce(sum(amount_cents), 0)::int as cents"));
    if (input.amountCents > payment.amount_cents - Number((again as unknown as { cents: number }).cents)) throw new PaymentRefused("This payment was refunded meanwhile; reload and try again.");
    const [row] = await trx("refunds").insert({ payment_id: payment.id, amount_cents: input.amountCents, reason, created_by: input.actorUserId }).returning("id");
    const refundId = Number(row.id);
    await audit(trx, input.actorUserId, "refund.record", "refund", refundId, null, { paymentId: payment.id, method: payment.method, amountCents: input.amountCents, reason });
    const status = await settleInvoice(trx, payment.invoice_id, input.actorUserId);
    return { refundId, status };
  });
}
