import type { Knex } from "knex";
import { queueEmail } from "./emails.server";
import { invoiceDocument } from "./invoice-documents.server";
import { invoiceDedupeKey, invoiceEmailFor } from "./invoice-mail.server";

// Resending an invoice e-mail from the office. queueInvoiceEmail sends an invoice once (its
// dedupe key is `invoice:<id>`); a resend is a new outbox row keyed `invoice:<id>:resend:<n>`,
// n counting the invoice's resends, so a double-submitted form queues one (the key exists).
// The caller calls requestEmailDelivery([emailId]) after this returns.

export type InvoiceResend =
  | { status: "queued"; emailId: number }
  | { status: "refused"; message: string };


export async function resendInvoiceEmail(
  db: Knex,
  input: { invoiceId: number; actorUserId: number; now?: Date },
): Promise<InvoiceResend> {
  const now = input.now ?? new Date();
  return db.transaction(async (trx) => {
    const invoice = await trx("invoices")
      .where({ id: input.invoiceId })
      .forUpdate()
      .first("id", "status");
    if (!invoice)
      return {
        status: "refused",
        message: `There is no invoice ${input.invoiceId}.`,
      };
    if (invoice.status === "void")
      return { status: "refused", message: "A void invoice is not sent." };
    const doc = (await invoiceDocument(trx, input.invoiceId))!;
    if (doc.customer.anonymised || !doc.customer.email.includes("@"))
      return {
        status: "refused",
        message: "The customer has no e-mail address.",
      };

    const prefix = `${invoiceDedupeKey(input.invoiceId)}:resend:`;
    const done = (await trx("email_log")
      .whereLike("dedupe_key", `${prefix}%`)
      .first(trx.raw("count(*)::int as n"))) as unknown as { n: number };
    const dedupeKey = `${prefix}${Number(done.n) + 1}`;

    const emailId = await queueEmail(trx, await invoiceEmailFor(doc, dedupeKey, now));
    if (emailId === null)
      return {
        status: "refused",
        message: "This invoice is being resent already; reload the page.",
      };
    await trx("invoices")
      .where({ id: input.invoiceId })
      .update({
        sent_at: trx.raw("coalesce(sent_at, now())") as unknown as Date,
        updated_at: trx.fn.now() as unknown as Date,
      });
    await trx("audit_log").insert({
      actor_user_id: input.actorUserId,
      action: "invoice.email_resent",
      entity_type: "invoice",
      entity_id: String(input.invoiceId),
      after: JSON.stringify({
        emailId,
        to: doc.customer.email,
        number: doc.number,
        dedupeKey,
      }),
    });
    return { status: "queued", emailId };
  });
}
