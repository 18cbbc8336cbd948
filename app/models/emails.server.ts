import type { Knex } from "knex";
import type { EmailLogRow } from "~/models/tables";
import { mailDomain, mailFrom, mailTransport, type MailTransport } from "~/services/mail.server";

// The outbox. Code that decides to send an e-mail queues it in email_log inside its own
// transaction (so a rolled-back booking sends nothing), then asks for delivery after commit
// (requestEmailDelivery in app/services/jobs.server.ts). The worker delivers each row
// through SMTP holding the row's lock, so a message is never sent twice by two workers;
// failures are retried with exponential backoff by the worker's sweep.

export type OutgoingEmail = {
  kind: string;
  to: string;
  subject: string;
  html: string;
  text: string;
  customerId?: number | null;
  bookingId?: number | null;
  visitId?: number | null;
  invoiceId?: number | null;
  /** One e-mail per key, ever: queueing a key that exists queues nothing. */
  dedupeKey?: string | null;
  attachments?: { filename: string; contentType: string; contentBase64: string }[];
};

export type DeliveryResult = "sent" | "already-sent" | "failed";

/** Attempts after which the sweep stops retrying (the row stays "failed" with its last error). */
export const MAX_DELIVERY_ATTEMPTS = 8;

/** Wait before the next try after `attempts` failed tries: 1 min, 2, 4, … capped at 6 hours. */
export function retryDelaySeconds(attempts: number): number {
  return Math.min(60 * 2 ** Math.max(0, attempts - 1), 6 * 60 * 60);
}

export class EmailNotFoundError extends Error {
  constructor(readonly emailId: number) {
    super(`e-mail ${emailId} is not in email_log`);
    this.name = "EmailNotFoundError";
  }
}

type DeliveryOptions = {
  /** The SMTP transport; the process's shared one (from the environment) by default. */
  transport?: MailTransport;
};

function requireText(value: string, what: string): string {
  if (typeof value !== "string" || value.trim() === "") throw new TypeError(`queueEmail: ${what} is empty`);
  return value;
}

/**
 * Queues an e-mail in the caller's transaction. Returns the email_log id, or null (and
 * queues nothing) when an e-mail with the same dedupeKey exists already.
 */
export async function queueEmail(trx: Knex, email: OutgoingEmail): Promise<number | null> {
  const to = requireText(email.to, "the recipient").trim();
  if (!/^[^\s@<>]+@[^\s@<>]+$/.test(to)) throw new TypeError(`queueEmail: "${to}" is not an e-mail address`);
  const attachments = email.attachments?.length ? email.attachments : null;
  const rows = await trx("email_log")
    .insert({
      kind: requireText(email.kind, "the kind"),
      to_address: to,
      subject: requireText(email.subject, "the subject"),
      html: requireText(email.html, "the HTML body"),
      text_body: requireText(email.text, "the text body"),
      attachments: (attachments ? JSON.stringify(attachments) : null) as unknown as EmailLogRow["attachments"],
      customer_id: email.customerId ?? null,
      booking_id: email.bookingId ?? null,
      visit_id: email.visitId ?? null,
      invoice_id: email.invoiceId ?? null,
      dedupe_key: email.dedupeKey ?? null,
      status: "queued",
      attempts: 0,
      // Due at once: the worker's sweep sends it even if the delivery job never arrives.
      next_attempt_at: trx.fn.now() as unknown as Date,
    })
    .onConflict("dedupe_key")
    .ignore()
    .returning("id");
  return rows.length > 0 ? Number(rows[0].id) : null;
}

function describeError(error: unknown): string {
  if (error instanceof Error) {
    const code = (error as { code?: unknown }).code;
    return (typeof code === "string" ? `${code}: ` : "") + error.message;
  }
  return String(error);
}

function messageFor(row: EmailLogRow) {
  const from = mailFrom();
  return {
    from,
    to: row.to_address,
    subject: row.subject,
    html: row.html ?? undefined,
    text: row.text_body ?? undefined,
    // The same Message-ID on every try, so a receiver can drop a repeat.
    messageId: `<email-${row.id}.${new Date(row.created_at).getTime()}@${mailDomain(from)}>`,
    headers: { "Auto-Submitted": "auto-generated", "X-Varroute-Email-Id": String(row.id), "X-Varroute-Kind": row.kind },
    attachments: (row.attachments ?? []).map((a) => ({
      filename: a.filename,
      contentType: a.contentType,
      content: a.contentBase64,
      encoding: "base64",
    })),
  };
}

/**
 * Delivers one queued e-mail. Locks its row for the whole send, so a concurrent call waits
 * and then finds it sent; a sent e-mail is never sent again. On an SMTP failure the row
 * becomes "failed" with attempts + 1, the error, and the time of the next try.
 */
export async function deliverEmail(db: Knex, emailId: number, options: DeliveryOptions = {}): Promise<DeliveryResult> {
  const result = await deliver(db, emailId, options, false);
  return result === "not-due" ? "failed" : result;
}

async function deliver(db: Knex, emailId: number, options: DeliveryOptions, onlyIfDue: boolean): Promise<DeliveryResult | "not-due"> {
  const transport = options.transport ?? mailTransport();
  return db.transaction(async (trx) => {
    // SMTP timeouts bound a send to well under this; a lock held longer means trouble.
    await trx.raw("set local lock_timeout = '120s'");
    const row = await trx("email_log")
      .where({ id: emailId })
      .forUpdate()
      .first("*", trx.raw("coalesce(next_attempt_at <= clock_timestamp(), false) as due"));
    if (!row) throw new EmailNotFoundError(emailId);
    if (row.status === "sent") return "already-sent";
    // The sweep found it due, but another delivery may have tried (and failed) meanwhile.
    if (onlyIfDue && !(row as typeof row & { due: boolean }).due) return "not-due";
    const attempts = row.attempts + 1;

    let failure: string | null = null;
    if (!row.html && !row.text_body) {
      failure = "no message body stored for this e-mail";
    } else {
      try {
        await transport.sendMail(messageFor(row));
      } catch (error) {
        failure = describeError(error);
      }
    }

    if (failure !== null) {
      const retry = attempts < MAX_DELIVERY_ATTEMPTS && row.html !== null;
      await trx("email_log")
        .where({ id: emailId })
        .update({
          status: "failed",
          attempts,
          last_error: failure.slice(0, 2000),
          next_attempt_at: (retry
            ? trx.raw("clock_timestamp() + make_interval(secs => ?)", [retryDelaySeconds(attempts)])
            : null) as unknown as Date,
          updated_at: trx.fn.now() as unknown as Date,
        });
      return "failed";
    }

    await trx("email_log")
      .where({ id: emailId })
      .update({
        status: "sent",
        attempts,
        sent_at: trx.raw("clock_timestamp()") as unknown as Date,
        last_error: null,
        next_attempt_at: null,
        updated_at: trx.fn.now() as unknown as Date,
      });
    return "sent";
  });
}

/**
 * The worker's sweep: delivers queued and failed e-mails whose next try is due, oldest
 * first, skipping any another process is delivering right now. Returns how many were sent.
 */
export async function deliverQueuedEmails(
  db: Knex,
  limit = 50,
  options: DeliveryOptions & { onResult?: (emailId: number, result: DeliveryResult | Error) => void } = {},
): Promise<number> {
  const due = await db("email_log")
    .whereIn("status", ["queued", "failed"])
    .whereNotNull("next_attempt_at")
    .where("next_attempt_at", "<=", db.fn.now())
    .orderBy([{ column: "next_attempt_at" }, { column: "id" }])
    .limit(limit)
    .forUpdate()
    .skipLocked()
    .select("id");
  let sent = 0;
  for (const { id } of due) {
    try {
      const result = await deliver(db, Number(id), options, true);
      if (result === "not-due") continue;
      if (result === "sent") sent++;
      options.onResult?.(Number(id), result);
    } catch (error) {
      options.onResult?.(Number(id), error instanceof Error ? error : new Error(String(error)));
    }
  }
  return sent;
}
