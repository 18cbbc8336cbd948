import type { Knex } from "knex";

// Card checkout safety (app/models/payments.server.ts).
//
// checkout_sessions: every Stripe Checkout Session made for an invoice, so that the webhook
// can tell whether a completed session was made for the invoice it names, and so that the
// sessions that may still take money (status open) can be expired when the balance changes
// or the invoice is voided. invoices.stripe_checkout_session_id stays the invoice's current
// session. A table rather than columns: an invoice has many sessions over its life, and a
// paid stale one must still be recognised.
//   open     — made, not known to be expired or paid
//   expired  — expired (by us, or by Stripe after 24 hours)
//   paid     — its payment is recorded
//   refunded — it was paid, but the payment was refused and given back
//
// card_payment_refusals: card money the webhook refused (void or settled invoice, another
// currency, more than the balance, a session not made for the invoice) and refunded in full,
// one row per payment intent, so a repeated or later event (a session event after the refund
// event, the refund's own refund.created) records nothing.
const CHECKOUT_SESSION_STATUSES = ["open", "expired", "paid", "refunded"] as const;
const CARD_REFUSAL_REASONS = ["no_invoice", "unknown_session", "invoice_not_open", "currency_mismatch", "over_balance"] as const;

function inList(column: string, values: readonly string[]) {
  return `${column} in (${values.map((v) => `'${v}'`).join(", ")})`;
}

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("checkout_sessions", (t) => {
    t.text("id").primary();
    t.bigInteger("invoice_id").notNullable().references("invoices.id").onDelete("cascade");
    // Null only for sessions made before this table (their amount was not kept).
    t.integer("amount_cents");
    t.text("currency").notNullable();
    t.text("status").notNullable().defaultTo("open");
    t.text("payment_intent_id");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("updated_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.check(inList("status", CHECKOUT_SESSION_STATUSES), [], "checkout_sessions_status_check");
    t.check("amount_cents is null or amount_cents > 0", [], "checkout_sessions_amount_check");
    t.index(["invoice_id", "status"]);
  });
  // The sessions invoices point at already: kept as open; the next payment start checks them.
  await knex.raw(
    `insert into checkout_sessions (id, invoice_id, currency, status)
     select stripe_checkout_session_id, id, currency, 'open' from invoices where stripe_checkout_session_id is not null
     on conflict (id) do nothing`,
  );

  await knex.schema.createTable("card_payment_refusals", (t) => {
    t.text("payment_intent_id").primary();
    t.text("checkout_session_id");
    t.bigInteger("invoice_id").references("invoices.id").onDelete("set null");
    t.integer("amount_cents").notNullable();
    t.text("currency").notNullable();
    t.text("reason").notNullable();
    // Null when Stripe had nothing left to refund (given back already).
    t.text("stripe_refund_id");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.check(inList("reason", CARD_REFUSAL_REASONS), [], "card_payment_refusals_reason_check");
    t.check("amount_cents >= 0", [], "card_payment_refusals_amount_check");
    t.index(["invoice_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("card_payment_refusals");
  await knex.schema.dropTableIfExists("checkout_sessions");
}
