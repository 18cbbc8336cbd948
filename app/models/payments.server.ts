import type { Knex } from "knex";
import type Stripe from "stripe";
import { formatDollars } from "~/domain/billing";
import type { CardPaymentRefusalRow, InvoiceRow, PaymentRow } from "./tables";
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
// Checkout safety: one open Checkout Session per invoice (startCardPayment holds the invoice
// row lock while it talks to Stripe; every session made is kept in checkout_sessions), and
// the open one is expired when the balance changes or the invoice is voided. Card money is
// recorded only when the invoice is open, in its currency, through a session made for it, and
// not more than the balance; otherwise all of it is refunded through Stripe and the refusal
// kept (card_payment_refusals, audit action payment.card_refused), so a paid amount never
// passes the total and a repeated event does nothing twice.
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

export const PAYMENT_CONFIRMING_MESSAGE = "A card payment for this invoice is being confirmed. Reload this page in a minute.";

/** Why the webhook gave card money back instead of recording it (card_payment_refusals.reason). */
export type CardRefusalReason = CardPaymentRefusalRow["reason"];

const REFUSAL_WORDS: Record<CardRefusalReason, string> = {
  no_invoice: "the invoice it names does not exist",
  unknown_session: "the checkout was not made for this invoice",
  invoice_not_open: "the invoice takes no more payments",
  currency_mismatch: "it was paid in another currency",
  over_balance: "it is more than the balance owed",
};

/** The session as Stripe has it, or null when Stripe does not know it (any more). */
async function retrieveSession(stripe: Stripe, sessionId: string, options?: Stripe.RequestOptions): Promise<Stripe.Checkout.Session | null> {
  try {
    return await stripe.checkout.sessions.retrieve(sessionId, undefined, options);
  } catch (error) {
    if (isStripeError(error) && error.type === "StripeInvalidRequestError") return null;
    throw error;
  }
}

/**
 * Expires an open session at Stripe. A session that is no longer open (expired, or paid
 * meanwhile) cannot be expired: then Stripe is asked what it is. Returns the session as it
 * ends, or null when Stripe does not know it.
 */
async function expireAtStripe(stripe: Stripe, sessionId: string, options?: Stripe.RequestOptions): Promise<Stripe.Checkout.Session | null> {
  try {
    return await stripe.checkout.sessions.expire(sessionId, undefined, options);
  } catch (error) {
    if (!isStripeError(error) || error.type !== "StripeInvalidRequestError") throw error;
    return retrieveSession(stripe, sessionId, options);
  }
}

/** Marks a session expired here (once) with an audit row naming why. */
async function markSessionExpired(trx: Knex, sessionId: string, invoiceId: number, why: string, actorUserId: number | null) {
  const [row] = await trx("checkout_sessions").where({ id: sessionId, status: "open" }).update({ status: "expired", updated_at: trx.fn.now() }).returning("id");
  if (row) await audit(trx, actorUserId, "invoice.checkout_expired", "invoice", invoiceId, { stripeCheckoutSessionId: sessionId, status: "open" }, { stripeCheckoutSessionId: sessionId, status: "expired", why });
}

/**
 * A completed session whose payment the webhook has settled already (recorded, or refused
 * and refunded) is marked so here; false while its webhook is still to come.
 */
async function settleCompletedSession(trx: Knex, session: Stripe.Checkout.Session): Promise<boolean> {
  const piId = idOf(session.payment_intent);
  if (!piId) return false;
  const paid = await trx("payments").where({ stripe_payment_intent_id: piId }).first("id");
  const refused = paid ? undefined : await trx("card_payment_refusals").where({ payment_intent_id: piId }).first("payment_intent_id");
  if (!paid && !refused) return false;
  await trx("checkout_sessions").where({ id: session.id }).update({ status: paid ? "paid" : "refunded", payment_intent_id: piId, updated_at: trx.fn.now() });
  return true;
}

/**
 * A Checkout Session for the invoice's open balance, with the customer's Stripe customer made
 * on first use. Returns the hosted page's URL. Nothing is marked paid here: only the signed
 * webhook does that.
 *
 * One open session per invoice: the invoice row is locked (FOR UPDATE) for the whole call,
 * Stripe included, so parallel calls run one after the other and the later ones find the
 * session the first made. The current session is reused while it is open for the balance;
 * every other session of the invoice that may still take money is expired first. A session
 * paid whose webhook has not come yet stops a new one (PaymentRefused): paying twice is what
 * this prevents.
 */
export async function startCardPayment(
  db: Knex,
  input: { invoiceId: number; successUrl: string; cancelUrl: string; actorUserId?: number | null },
  deps: Deps = {},
): Promise<CardPaymentStart> {
  const stripe = deps.stripe ?? stripeClient();
  const actor = input.actorUserId ?? null;
  try {
    return await db.transaction(async (trx): Promise<CardPaymentStart> => {
      const invoice = await trx("invoices").where({ id: input.invoiceId }).forUpdate().first();
      if (!invoice) throw new PaymentRefused(`There is no invoice ${input.invoiceId}.`);
      if (invoice.status !== "open") throw new PaymentRefused(`Invoice ${invoice.number} is ${invoice.status}; there is nothing to pay.`);
      const money = await invoiceMoney(trx, invoice);
      if (money.balanceCents <= 0) throw new PaymentRefused(`Invoice ${invoice.number} has nothing left to pay.`);
      const customer = await trx("customers").where({ id: invoice.customer_id }).first();
      if (!customer) throw new PaymentRefused(`Invoice ${invoice.number} has no customer.`);
      const currency = invoice.currency.toLowerCase();

      let reuse: CardPaymentStart | null = null;
      const live = await trx("checkout_sessions").where({ invoice_id: invoice.id, status: "open" }).orderBy("created_at", "desc").pluck("id");
      for (const sessionId of live) {
        let session = await retrieveSession(stripe, sessionId);
        if (
          !reuse &&
          session?.status === "open" &&
          session.id === invoice.stripe_checkout_session_id &&
          session.amount_total === money.balanceCents &&
          session.currency === currency &&
          session.url
        ) {
          reuse = { url: session.url, sessionId: session.id, amountCents: money.balanceCents };
          continue;
        }
        let why = session === null ? "unknown_to_stripe" : "expired_in_stripe";
        if (session?.status === "open") {
          why = session.amount_total === money.balanceCents && session.currency === currency ? "replaced" : "balance_changed";
          session = await expireAtStripe(stripe, sessionId);
        }
        if (session?.status === "complete") {
          if (await settleCompletedSession(trx, session)) continue;
          throw new PaymentRefused(PAYMENT_CONFIRMING_MESSAGE);
        }
        await markSessionExpired(trx, sessionId, invoice.id, why, actor);
      }
      if (reuse) return reuse;

      let stripeCustomerId = customer.stripe_customer_id;
      if (!stripeCustomerId) {
        const created = await stripe.customers.create(
          { email: customer.email, name: customer.name, metadata: { customerId: String(customer.id) } },
          { idempotencyKey: `varroute-customer-${customer.id}` },
        );
        await trx("customers").where({ id: customer.id }).whereNull("stripe_customer_id").update({ stripe_customer_id: created.id, updated_at: trx.fn.now() });
        stripeCustomerId = (await trx("customers").where({ id: customer.id }).first("stripe_customer_id"))!.stripe_customer_id ?? created.id;
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
              currency,
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

      await trx("checkout_sessions").insert({ id: session.id, invoice_id: invoice.id, amount_cents: money.balanceCents, currency, status: "open" });
      await trx("invoices").where({ id: invoice.id }).update({ stripe_checkout_session_id: session.id, updated_at: trx.fn.now() });
      await audit(trx, actor, "invoice.checkout_session", "invoice", invoice.id, { stripeCheckoutSessionId: invoice.stripe_checkout_session_id }, {
        stripeCheckoutSessionId: session.id,
        amountCents: money.balanceCents,
      });
      return { url: session.url, sessionId: session.id, amountCents: money.balanceCents };
    });
  } catch (error) {
    unavailable(error);
  }
}

/**
 * Expires the invoice's sessions that may still take money, after its balance changed or it
 * was voided (`why`). Never throws: with Stripe unreachable the session stays open here, the
 * next startCardPayment expires it, and the webhook refuses a payment made on it meanwhile.
 * Returns the sessions expired and those that were not (Stripe unreachable, or paid meanwhile).
 */
export async function expireCheckoutSessions(
  db: Knex,
  input: { invoiceId: number; why: "balance_changed" | "void"; actorUserId: number | null },
  deps: Pick<Deps, "stripe"> = {},
): Promise<{ expired: string[]; notExpired: string[] }> {
  const expired: string[] = [];
  const notExpired: string[] = [];
  let live: string[];
  try {
    live = await db("checkout_sessions").where({ invoice_id: input.invoiceId, status: "open" }).orderBy("created_at").pluck("id");
  } catch (error) {
    // The change it follows is committed already; the next start or the webhook catches up.
    console.error(`[payments] could not read the Checkout Sessions of invoice ${input.invoiceId}: ${error instanceof Error ? error.message : String(error)}`);
    return { expired, notExpired };
  }
  if (live.length === 0) return { expired, notExpired };
  // Short and without retries: the office is waiting, and nothing depends on the answer.
  const options: Stripe.RequestOptions = { timeout: 5_000, maxNetworkRetries: 0 };
  for (const sessionId of live) {
    try {
      const stripe = deps.stripe ?? stripeClient();
      const session = await expireAtStripe(stripe, sessionId, options);
      if (session?.status === "complete") {
        // Paid meanwhile: its webhook records or refuses it.
        notExpired.push(sessionId);
        continue;
      }
      await db.transaction((trx) => markSessionExpired(trx, sessionId, input.invoiceId, input.why, input.actorUserId));
      expired.push(sessionId);
    } catch (error) {
      console.error(`[payments] could not expire Checkout Session ${sessionId} of invoice ${input.invoiceId}: ${error instanceof Error ? error.message : String(error)}`);
      notExpired.push(sessionId);
    }
  }
  return { expired, notExpired };
}

// --- Webhooks ------------------------------------------------------------------------------

/**
 * emailIds: the e-mails this event queued (receipts); their delivery is requested after
 * commit. refused: why card money in this event was given back instead of recorded.
 */
export type WebhookOutcome = { eventId: string; type: string; duplicate: boolean; handled: boolean; emailIds: number[]; refused?: CardRefusalReason };

type SessionShape = {
  id: string;
  payment_intent: string | { id: string } | null;
  payment_status: string;
  amount_total: number | null;
  currency: string | null;
  metadata: Record<string, string> | null;
  client_reference_id: string | null;
};
type RefundShape = { id: string; amount: number; payment_intent: string | { id: string } | null; status: string | null; reason: string | null; metadata?: Record<string, string> | null };

function idOf(value: string | { id: string } | null): string | null {
  return typeof value === "string" ? value : (value?.id ?? null);
}

function invoiceIdFrom(metadata: Record<string, string> | null | undefined, fallback?: string | null): number | null {
  const text = metadata?.invoiceId ?? fallback ?? null;
  return text && /^\d+$/.test(text) ? Number(text) : null;
}

/** Card money Stripe took: from a completed session, or learnt from a payment intent. */
type CardMoney = { invoiceId: number | null; paymentIntentId: string; amountCents: number; currency: string | null; sessionId: string | null; via: string };

type CardOutcome = { payment: PaymentRow | null; receiptEmailId: number | null; refused: CardRefusalReason | null };

/** Why this money cannot be recorded on the (locked) invoice, or null when it can. */
async function refusalReason(trx: Knex.Transaction, invoice: InvoiceRow | undefined, p: CardMoney): Promise<CardRefusalReason | null> {
  if (!invoice) return "no_invoice";
  if (invoice.status !== "open") return "invoice_not_open";
  const madeForInvoice =
    p.sessionId !== null &&
    (p.sessionId === invoice.stripe_checkout_session_id || (await trx("checkout_sessions").where({ id: p.sessionId, invoice_id: invoice.id }).first("id")) !== undefined);
  if (!madeForInvoice) return "unknown_session";
  if ((p.currency ?? "").toLowerCase() !== invoice.currency.toLowerCase()) return "currency_mismatch";
  const money = await invoiceMoney(trx, invoice);
  if (p.amountCents > money.balanceCents) return "over_balance";
  return null;
}

/**
 * Records card money once (keyed by payment intent) when the invoice may take it: open, same
 * currency, a session made for it, not more than the balance. Otherwise gives it all back
 * through Stripe (idempotency key from the session) and keeps the refusal, once per payment
 * intent, with an audit row. The invoice row is locked first, so a payment, a refusal or a
 * void made meanwhile is seen. receiptEmailId is null when nothing new was recorded.
 */
async function recordCardPayment(trx: Knex.Transaction, stripe: Stripe, p: CardMoney): Promise<CardOutcome> {
  const invoice = p.invoiceId === null ? undefined : await trx("invoices").where({ id: p.invoiceId }).forUpdate().first();
  const recorded = await trx("payments").where({ stripe_payment_intent_id: p.paymentIntentId }).first();
  if (recorded) return { payment: recorded, receiptEmailId: null, refused: null };
  const refusedBefore = await trx("card_payment_refusals").where({ payment_intent_id: p.paymentIntentId }).first();
  if (refusedBefore) return { payment: null, receiptEmailId: null, refused: refusedBefore.reason };

  const reason = await refusalReason(trx, invoice, p);
  if (reason === null && invoice) {
    const [inserted] = await trx("payments")
      .insert({ invoice_id: invoice.id, amount_cents: p.amountCents, method: "card", reference: p.paymentIntentId, stripe_payment_intent_id: p.paymentIntentId })
      .returning("*");
    await audit(trx, null, "payment.card", "payment", inserted.id, null, { invoiceId: invoice.id, amountCents: p.amountCents, stripePaymentIntentId: p.paymentIntentId, via: p.via });
    if (p.sessionId) await trx("checkout_sessions").where({ id: p.sessionId, invoice_id: invoice.id }).update({ status: "paid", payment_intent_id: p.paymentIntentId, updated_at: trx.fn.now() });
    await settleInvoice(trx, invoice.id, null);
    return { payment: inserted, receiptEmailId: await queueReceiptEmail(trx, Number(inserted.id)), refused: null };
  }
  const why = reason ?? "no_invoice";

  // The refusal row first: a second delivery of this money waits on it, then finds it.
  const [claimed] = await trx("card_payment_refusals")
    .insert({
      payment_intent_id: p.paymentIntentId,
      checkout_session_id: p.sessionId,
      invoice_id: invoice?.id ?? null,
      amount_cents: p.amountCents,
      currency: (p.currency ?? "").toLowerCase(),
      reason: why,
    })
    .onConflict("payment_intent_id")
    .ignore()
    .returning("payment_intent_id");
  if (!claimed) return { payment: null, receiptEmailId: null, refused: (await trx("card_payment_refusals").where({ payment_intent_id: p.paymentIntentId }).first())?.reason ?? why };

  // Stripe is asked inside the transaction: if it fails, nothing here is kept and the event
  // is delivered again; the idempotency key makes the retry the same refund.
  let refundId: string | null = null;
  try {
    const refund = await stripe.refunds.create(
      { payment_intent: p.paymentIntentId, metadata: { checkoutSessionId: p.sessionId ?? "", refused: "Card payment refused: see the invoice's audit trail" } },
      { idempotencyKey: `varroute-refuse-${p.sessionId ?? p.paymentIntentId}` },
    );
    refundId = refund.id;
  } catch (error) {
    // Nothing left to refund: it was given back already (in Stripe's dashboard, say).
    if (!(isStripeError(error) && error.type === "StripeInvalidRequestError" && error.code === "charge_already_refunded")) throw error;
  }
  await trx("card_payment_refusals").where({ payment_intent_id: p.paymentIntentId }).update({ stripe_refund_id: refundId });
  if (p.sessionId && invoice) {
    await trx("checkout_sessions").where({ id: p.sessionId, invoice_id: invoice.id }).update({ status: "refunded", payment_intent_id: p.paymentIntentId, updated_at: trx.fn.now() });
  }
  const balanceCents = invoice ? (await invoiceMoney(trx, invoice)).balanceCents : null;
  await audit(trx, null, "payment.card_refused", invoice ? "invoice" : "checkout_session", invoice ? invoice.id : (p.sessionId ?? p.paymentIntentId), null, {
    invoiceId: invoice?.id ?? p.invoiceId,
    reason: why,
    explanation: `Refunded ${formatDollars(p.amountCents)} to the card: ${REFUSAL_WORDS[why]}.`,
    amountCents: p.amountCents,
    currency: p.currency,
    invoiceCurrency: invoice?.currency ?? null,
    invoiceStatus: invoice?.status ?? null,
    balanceCents,
    stripeCheckoutSessionId: p.sessionId,
    currentCheckoutSessionId: invoice?.stripe_checkout_session_id ?? null,
    stripePaymentIntentId: p.paymentIntentId,
    stripeRefundId: refundId,
    via: p.via,
  });
  return { payment: null, receiptEmailId: null, refused: why };
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

  // A refund for a payment not recorded yet (events out of order): learn the invoice, the
  // money and the session from the payment intent before the transaction, so these network
  // calls hold no row locks.
  let intentForRefund: CardMoney | null = null;
  if (event.type === "refund.created" || event.type === "refund.updated") {
    const refund = event.data.object as unknown as RefundShape;
    const piId = idOf(refund.payment_intent);
    if (
      piId &&
      !(await db("payments").where({ stripe_payment_intent_id: piId }).first("id")) &&
      !(await db("card_payment_refusals").where({ payment_intent_id: piId }).first("payment_intent_id"))
    ) {
      const pi = await stripe.paymentIntents.retrieve(piId);
      const invoiceId = invoiceIdFrom(pi.metadata);
      if (invoiceId !== null && pi.status === "succeeded") {
        const sessions = await stripe.checkout.sessions.list({ payment_intent: pi.id, limit: 1 });
        intentForRefund = { invoiceId, paymentIntentId: pi.id, amountCents: pi.amount_received, currency: pi.currency, sessionId: sessions.data[0]?.id ?? null, via: event.type };
      }
    }
  }

  const outcome = await db.transaction(async (trx): Promise<WebhookOutcome> => {
    const [fresh] = await trx("webhook_events")
      .insert({ id: event.id, type: event.type, payload: JSON.stringify(event) })
      .onConflict("id")
      .ignore()
      .returning("id");
    if (!fresh) return { eventId: event.id, type: event.type, duplicate: true, handled: false, emailIds: [] };
    const ignored = { eventId: event.id, type: event.type, duplicate: false, handled: false, emailIds: [] };

    switch (event.type) {
      case "checkout.session.completed":
      case "checkout.session.async_payment_succeeded": {
        const session = event.data.object as unknown as SessionShape;
        const piId = idOf(session.payment_intent);
        // The session as made here names its invoice; the metadata is the fallback.
        const made = await trx("checkout_sessions").where({ id: session.id }).first("invoice_id");
        const invoiceId = made ? Number(made.invoice_id) : invoiceIdFrom(session.metadata, session.client_reference_id);
        if (session.payment_status !== "paid" || !piId || invoiceId === null || !session.amount_total) return ignored;
        const result = await recordCardPayment(trx, stripe, {
          invoiceId,
          paymentIntentId: piId,
          amountCents: session.amount_total,
          currency: session.currency,
          sessionId: session.id,
          via: event.type,
        });
        return {
          eventId: event.id,
          type: event.type,
          duplicate: false,
          handled: true,
          emailIds: result.receiptEmailId === null ? [] : [result.receiptEmailId],
          ...(result.refused ? { refused: result.refused } : {}),
        };
      }
      case "checkout.session.expired": {
        const session = event.data.object as unknown as SessionShape;
        const made = await trx("checkout_sessions").where({ id: session.id, status: "open" }).first("invoice_id");
        if (!made) return ignored;
        await markSessionExpired(trx, session.id, Number(made.invoice_id), "expired_in_stripe", null);
        return { eventId: event.id, type: event.type, duplicate: false, handled: true, emailIds: [] };
      }
      case "refund.created":
      case "refund.updated": {
        const refund = event.data.object as unknown as RefundShape;
        const piId = idOf(refund.payment_intent);
        if (!piId || refund.status === "failed" || refund.status === "canceled") return ignored;
        let payment = await trx("payments").where({ stripe_payment_intent_id: piId }).first();
        const emailIds: number[] = [];
        if (!payment && intentForRefund) {
          // Recorded only as a completed session would be (same checks); refused money is given back in full.
          const recorded = await recordCardPayment(trx, stripe, intentForRefund);
          if (recorded.refused) return { eventId: event.id, type: event.type, duplicate: false, handled: true, emailIds: [], refused: recorded.refused };
          payment = recorded.payment ?? undefined;
          if (recorded.receiptEmailId !== null) emailIds.push(recorded.receiptEmailId);
        }
        if (!payment) return ignored;
        await recordStripeRefund(trx, payment, { id: refund.id, amountCents: refund.amount, reason: refund.metadata?.reason || refund.reason || "Refunded in Stripe", actorUserId: null });
        return { eventId: event.id, type: event.type, duplicate: false, handled: true, emailIds };
      }
      default:
        return ignored;
    }
  });
  // After commit (a caller's transaction commits later: it requests delivery itself).
  if (!db.isTransaction) await requestEmailDelivery(outcome.emailIds);
  return outcome;
}

// --- Office: cash and cheque; refunds ------------------------------------------------------

/**
 * Records a cash or cheque payment taken by the office, settles the invoice and queues the
 * receipt (receiptEmailId, null when none goes); delivery is requested after commit. Then the
 * invoice's open Checkout Session, made for the old balance, is expired (see
 * expireCheckoutSessions: a Stripe failure there does not undo the payment).
 */
export async function recordOfficePayment(
  db: Knex,
  input: { invoiceId: number; amountCents: number; method: "cash" | "cheque"; reference?: string | null; actorUserId: number; receivedAt?: Date },
  deps: Pick<Deps, "stripe"> = {},
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
  await expireCheckoutSessions(db, { invoiceId: input.invoiceId, why: "balance_changed", actorUserId: input.actorUserId }, deps);
  return result;
}

/**
 * Refunds (part of) a payment. Card: through Stripe first (idempotent per payment and the
 * amount already refunded), then recorded — the refund.created webhook finds it recorded.
 * Cash and cheque: recorded only (the office hands the money back). Either way the balance
 * grows, so the invoice's open Checkout Session, if any, is expired afterwards.
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
    const recorded = await db.transaction(async (trx) => {
      await trx("invoices").where({ id: payment.invoice_id }).forUpdate().first("id");
      const row = await recordStripeRefund(trx, payment, { id: refund.id, amountCents: refund.amount, reason, actorUserId: input.actorUserId });
      const status = (await trx("invoices").where({ id: payment.invoice_id }).first("status"))!.status;
      return { refundId: Number(row!.id), status };
    });
    await expireCheckoutSessions(db, { invoiceId: payment.invoice_id, why: "balance_changed", actorUserId: input.actorUserId }, deps);
    return recorded;
  }

  const recorded = await db.transaction(async (trx) => {
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
  await expireCheckoutSessions(db, { invoiceId: payment.invoice_id, why: "balance_changed", actorUserId: input.actorUserId }, deps);
  return recorded;
}
