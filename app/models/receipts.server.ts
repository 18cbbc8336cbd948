import type { Knex } from "knex";
import { paymentReceiptEmail } from "~/emails/payment";
import { dateInZone } from "~/services/clock.server";
import { defaultPayLinkExpiry, payLinkUrl } from "~/services/pay-link.server";
import { queueEmail } from "./emails.server";
import { invoiceDocument } from "./invoice-documents.server";
import { loadBusinessSettings } from "./settings.server";

// Payment receipts: one e-mail per payment received (card from a Stripe webhook, cash or
// cheque recorded by the office), queued in the transaction that records the payment. The
// dedupe key `payment_receipt:<paymentId>` makes it once per payment, however often the
// webhook or the form arrives. The caller requests delivery after commit.

export const paymentReceiptDedupeKey = (paymentId: number) => `payment_receipt:${paymentId}`;

/** The same test queueEmail applies, so an unusable address skips the receipt instead of failing the payment. */
const LOOKS_LIKE_ADDRESS = /^[^\s@<>]+@[^\s@<>]+$/;

/**
 * Queues the receipt for one payment in the caller's transaction. Returns the e-mail's id,
 * or null when nothing was queued: the receipt exists already, there is no such payment,
 * the invoice is void, or the customer is anonymised or has no usable address.
 */
export async function queueReceiptEmail(trx: Knex, paymentId: number, now = new Date()): Promise<number | null> {
  if (!Number.isSafeInteger(paymentId) || paymentId <= 0) throw new RangeError(`queueReceiptEmail: ${paymentId} is not a payment id`);
  const payment = await trx("payments").where({ id: paymentId }).first("id", "invoice_id", "amount_cents", "method", "reference", "received_at");
  if (!payment) return null;
  const dedupeKey = paymentReceiptDedupeKey(paymentId);
  if (await trx("email_log").where({ dedupe_key: dedupeKey }).first("id")) return null;

  const doc = await invoiceDocument(trx, Number(payment.invoice_id));
  // A payment on a void invoice is for the office to sort out (usually a refund).
  if (!doc || doc.status === "void") return null;
  const to = doc.customer.email.trim();
  if (doc.customer.anonymised || !LOOKS_LIKE_ADDRESS.test(to)) return null;

  const { timeZone } = await loadBusinessSettings(trx);
  const stillOwed = doc.status === "open" && doc.balanceCents > 0;
  const content = paymentReceiptEmail({
    customerName: doc.customer.name,
    invoiceNumber: doc.number,
    amountCents: Number(payment.amount_cents),
    method: payment.method,
    reference: payment.reference,
    receivedOn: dateInZone(new Date(payment.received_at), timeZone),
    balanceCents: stillOwed ? doc.balanceCents : 0,
    payUrl: stillOwed ? payLinkUrl(doc.invoiceId, defaultPayLinkExpiry(now)) : null,
  });
  return queueEmail(trx, {
    kind: "payment_receipt",
    to,
    ...content,
    customerId: doc.customer.id,
    invoiceId: doc.invoiceId,
    dedupeKey,
  });
}
