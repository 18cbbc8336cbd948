import type { Knex } from "knex";
import { invoiceEmail } from "~/emails/invoice";
import { renderInvoicePdf } from "~/services/invoice-pdf.server";
import { INVOICE_ISSUED_QUEUE, jobsBoss, type InvoiceIssuedJob } from "~/services/jobs.server";
import type { MailTransport } from "~/services/mail.server";
import { defaultPayLinkExpiry, payLinkUrl } from "~/services/pay-link.server";
import { deliverEmail, queueEmail, type DeliveryResult, type OutgoingEmail } from "./emails.server";
import { invoiceDocument, type InvoiceDocument } from "./invoice-documents.server";
import type { EmailLogRow } from "./tables";

// E-mailing an invoice with its PDF.
//
// Flow: finishing a visit creates the invoice; after that transaction commits,
// requestInvoiceEmail(invoiceId) puts an "invoice-issued" job on pg-boss. The worker's
// handler (handleInvoiceIssued) queues the e-mail in the outbox — PDF rendered and attached
// in the same transaction — and delivers it at once. A failed send stays in email_log as
// "failed" with its error and next try (the worker's sweep retries with backoff), where the
// office sees it (email_log.invoice_id).
//
// Never twice: the outbox row has the dedupe key `invoice:<id>`, and the invoice's row is
// locked while queueing, so a repeated job, a retry or two workers queue one e-mail, and the
// outbox delivers each row at most once.
//
// invoices.sent_at is set when the e-mail is QUEUED (in the same transaction), not when SMTP
// accepts it: it means "the invoice was issued to the customer", and it is what a resend or
// a catch-up checks. Whether the message actually went out, and every failed try, is on the
// email_log row (status, attempts, last_error, sent_at) — see invoiceEmailLog.

export const invoiceDedupeKey = (invoiceId: number) => `invoice:${invoiceId}`;

export type InvoiceEmailQueued =
  | { status: "queued"; emailId: number }
  | { status: "already-queued"; emailId: number }
  | { status: "skipped"; emailId: null; reason: "no-such-invoice" | "void" | "no-recipient" };

const DAY_MS = 86_400_000;

/** The pay link's expiry: the default 60 days, or 30 days past the due date when that is later. */
function payLinkExpiry(dueOn: string, now: Date): Date {
  const standard = defaultPayLinkExpiry(now);
  const afterDue = new Date(Date.parse(`${dueOn}T00:00:00Z`) + 30 * DAY_MS);
  return afterDue > standard ? afterDue : standard;
}

/** The invoice e-mail for a document: PDF attached, and a pay link while money is owed. */
export async function invoiceEmailFor(doc: InvoiceDocument, dedupeKey: string, now: Date): Promise<OutgoingEmail> {
  const payUrl = doc.status === "open" && doc.balanceCents > 0 ? payLinkUrl(doc.invoiceId, payLinkExpiry(doc.dueOn, now)) : null;
  const pdf = await renderInvoicePdf(doc, { payUrl });
  const content = invoiceEmail({
    customerName: doc.customer.name,
    number: doc.number,
    issuedOn: doc.issuedOn,
    dueOn: doc.dueOn,
    totalCents: doc.totalCents,
    yardName: doc.visit?.yardName ?? null,
    serviceDate: doc.visit?.serviceDate ?? null,
    coloniesTreated: doc.coloniesTreated,
    payUrl,
  });
  return {
    kind: "invoice",
    to: doc.customer.email,
    ...content,
    customerId: doc.customer.id,
    invoiceId: doc.invoiceId,
    visitId: doc.visit?.id ?? null,
    dedupeKey,
    attachments: [{ filename: `invoice-${doc.number}.pdf`, contentType: "application/pdf", contentBase64: pdf.toString("base64") }],
  };
}

/**
 * Queues the invoice e-mail with its PDF attached, in one transaction (a savepoint inside
 * the caller's): nothing for a void invoice or a customer without an address; the existing
 * e-mail when one was queued before. Sets invoices.sent_at (see the file comment).
 */
export async function queueInvoiceEmail(db: Knex, invoiceId: number, now = new Date()): Promise<InvoiceEmailQueued> {
  return db.transaction(async (trx) => {
    const invoice = await trx("invoices").where({ id: invoiceId }).forUpdate().first("id", "status", "due_on", "visit_id", "customer_id");
    if (!invoice) return { status: "skipped", emailId: null, reason: "no-such-invoice" };
    const dedupeKey = invoiceDedupeKey(invoiceId);
    const existing = await trx("email_log").where({ dedupe_key: dedupeKey }).first("id");
    if (existing) return { status: "already-queued", emailId: Number(existing.id) };
    if (invoice.status === "void") return { status: "skipped", emailId: null, reason: "void" };

    const doc = (await invoiceDocument(trx, invoiceId))!;
    if (doc.customer.anonymised || !doc.customer.email.includes("@")) return { status: "skipped", emailId: null, reason: "no-recipient" };
    const email = await invoiceEmailFor(doc, dedupeKey, now);
    const emailId = await queueEmail(trx, email);
    if (emailId === null) {
      // Queued by someone else meanwhile (the invoice lock makes this unlikely).
      const row = await trx("email_log").where({ dedupe_key: dedupeKey }).first("id");
      return { status: "already-queued", emailId: Number(row!.id) };
    }
    await trx("invoices")
      .where({ id: invoiceId })
      .update({ sent_at: trx.raw("coalesce(sent_at, now())") as unknown as Date, updated_at: trx.fn.now() as unknown as Date });
    await trx("audit_log").insert({
      actor_user_id: null,
      action: "invoice.email_queued",
      entity_type: "invoice",
      entity_id: String(invoiceId),
      after: JSON.stringify({ emailId, to: doc.customer.email, number: doc.number, pdfBytes: Buffer.byteLength(email.attachments![0].contentBase64, "base64") }),
    });
    return { status: "queued", emailId };
  });
}

/**
 * The worker's "invoice-issued" handler: queue the invoice e-mail, then deliver it when it
 * was queued now (an e-mail queued before is left to its own delivery and the sweep, so a
 * failed one keeps its backoff). Errors other than SMTP failures are thrown, for pg-boss to
 * retry the job; the retry finds the e-mail queued and sends nothing twice.
 */
export async function handleInvoiceIssued(
  db: Knex,
  invoiceId: number,
  options: { transport?: MailTransport; now?: Date } = {},
): Promise<{ queued: InvoiceEmailQueued; delivery: DeliveryResult | null }> {
  const queued = await queueInvoiceEmail(db, invoiceId, options.now);
  if (queued.status !== "queued") return { queued, delivery: null };
  const delivery = await deliverEmail(db, queued.emailId, { transport: options.transport });
  return { queued, delivery };
}

function withTimeout<T>(promise: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`${what} took longer than ${ms} ms`)), ms);
  });
  return Promise.race([promise, timeout]).finally(() => clearTimeout(timer));
}

/**
 * After the transaction that created the invoice has committed: one "invoice-issued" job.
 * Never throws; a job that could not be sent is logged (queueUnsentInvoiceEmails catches up).
 */
export async function requestInvoiceEmail(invoiceId: number): Promise<void> {
  if (!Number.isSafeInteger(invoiceId) || invoiceId <= 0) return;
  try {
    await withTimeout(
      (async () => {
        const boss = await jobsBoss();
        await boss.send(INVOICE_ISSUED_QUEUE, { invoiceId } satisfies InvoiceIssuedJob);
      })(),
      10_000,
      "sending the invoice-issued job",
    );
  } catch (error) {
    console.error(`[jobs] could not request the e-mail of invoice ${invoiceId}: ${error instanceof Error ? error.message : String(error)}`);
  }
}

/**
 * Catch-up for lost "invoice-issued" jobs, run by the worker's 15 s sweep (which then
 * requests delivery): queues the e-mail of open invoices created in the last `withinDays`
 * days, at least `graceMinutes` ago, that were never e-mailed. Returns the e-mails queued now.
 */
export async function queueUnsentInvoiceEmails(db: Knex, options: { withinDays?: number; graceMinutes?: number; limit?: number } = {}): Promise<number[]> {
  const rows = await db("invoices")
    .where({ status: "open" })
    .whereNull("sent_at")
    .where("created_at", ">", db.raw("now() - make_interval(days => ?)", [options.withinDays ?? 7]))
    .where("created_at", "<", db.raw("now() - make_interval(mins => ?)", [options.graceMinutes ?? 2]))
    .orderBy("id")
    .limit(options.limit ?? 50)
    .select("id");
  const ids: number[] = [];
  for (const { id } of rows) {
    // One invoice that fails (e.g. its PDF) must not hold up the ones after it.
    try {
      const result = await queueInvoiceEmail(db, Number(id));
      if (result.status === "queued") ids.push(result.emailId);
    } catch (error) {
      console.error(`[invoice-mail] catch-up for invoice ${id} failed: ${error instanceof Error ? error.message : String(error)}`);
    }
  }
  return ids;
}

/** The invoice's e-mails, newest first, for the office's invoice page. */
export async function invoiceEmailLog(
  db: Knex,
  invoiceId: number,
): Promise<Pick<EmailLogRow, "id" | "kind" | "to_address" | "subject" | "status" | "attempts" | "last_error" | "sent_at" | "next_attempt_at" | "created_at">[]> {
  return db("email_log")
    .where({ invoice_id: invoiceId })
    .orderBy([{ column: "created_at", order: "desc" }, { column: "id", order: "desc" }])
    .select("id", "kind", "to_address", "subject", "status", "attempts", "last_error", "sent_at", "next_attempt_at", "created_at");
}
