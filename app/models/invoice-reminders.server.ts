import type { Knex } from "knex";
import { overdueReminderEmail } from "~/emails/payment";
import { dateInZone } from "~/services/clock.server";
import { defaultPayLinkExpiry, payLinkUrl } from "~/services/pay-link.server";
import { queueEmail } from "./emails.server";
import { invoiceDocument } from "./invoice-documents.server";
import { loadBusinessSettings } from "./settings.server";

// Overdue invoice reminders. With N = overdueReminderDays (settings), reminder k of an open
// invoice with money owed falls due on due_on + k × N (business dates), k = 1…3. A run
// queues only the highest reminder due (never two at once, never an earlier one after a
// later one) and nothing within N days of the invoice's last reminder. Each reminder has the
// dedupe key `invoice_reminder:<invoiceId>:<k>`, so running twice a day queues nothing new.
// The worker runs this daily; the caller requests delivery of the returned ids.

export const MAX_OVERDUE_REMINDERS = 3;

export const invoiceReminderDedupeKey = (invoiceId: number, reminder: number) => `invoice_reminder:${invoiceId}:${reminder}`;

const DAY_MS = 86_400_000;
const LOOKS_LIKE_ADDRESS = /^[^\s@<>]+@[^\s@<>]+$/;

function addDays(date: string, days: number): string {
  return new Date(Date.parse(`${date}T00:00:00Z`) + days * DAY_MS).toISOString().slice(0, 10);
}

function daysBetween(from: string, to: string): number {
  return Math.round((Date.parse(`${to}T00:00:00Z`) - Date.parse(`${from}T00:00:00Z`)) / DAY_MS);
}

/** The reminder due `daysOverdue` days after the due date with one every `everyDays` days: 0 (none yet) to 3. */
export function overdueReminderNumber(daysOverdue: number, everyDays: number): number {
  if (!Number.isSafeInteger(everyDays) || everyDays < 1) throw new RangeError(`the reminder interval must be a whole number of days ≥ 1, got ${everyDays}`);
  if (!Number.isFinite(daysOverdue) || daysOverdue < everyDays) return 0;
  return Math.min(MAX_OVERDUE_REMINDERS, Math.floor(daysOverdue / everyDays));
}

type ReminderRun = { today: string; everyDays: number; timeZone: string; now: Date };

/**
 * Queues the overdue reminders due on the business's today at `now` (its time zone).
 * Returns the ids of the e-mails queued now. One invoice's failure is logged and skipped.
 */
export async function queueOverdueReminders(db: Knex, now: Date = new Date()): Promise<number[]> {
  if (!(now instanceof Date) || !Number.isFinite(now.getTime())) throw new RangeError("queueOverdueReminders: now is not a valid date");
  const { timeZone, overdueReminderDays } = await loadBusinessSettings(db);
  const run: ReminderRun = { today: dateInZone(now, timeZone), everyDays: overdueReminderDays, timeZone, now };
  const candidates = await db("invoices")
    .join("customers", "customers.id", "invoices.customer_id")
    .where("invoices.status", "open")
    .where("invoices.due_on", "<=", addDays(run.today, -run.everyDays))
    .whereNull("customers.anonymised_at")
    .orderBy([{ column: "invoices.due_on" }, { column: "invoices.id" }])
    .pluck("invoices.id");

  const queued: number[] = [];
  for (const id of candidates) {
    try {
      const emailId = await queueOverdueReminder(db, Number(id), run);
      if (emailId !== null) queued.push(emailId);
    } catch (error) {
      console.error(`[invoice-reminders] invoice ${id}: ${error instanceof Error ? error.message : String(error)}`);
    }
  }
  return queued;
}

/** One invoice's reminder, in its own transaction with the invoice row locked. */
async function queueOverdueReminder(db: Knex, invoiceId: number, run: ReminderRun): Promise<number | null> {
  return db.transaction(async (trx) => {
    const invoice = await trx("invoices").where({ id: invoiceId }).forUpdate().first("id", "status", "due_on", "reminded_at");
    if (!invoice || invoice.status !== "open") return null;
    const daysOverdue = daysBetween(invoice.due_on, run.today);
    const reminder = overdueReminderNumber(daysOverdue, run.everyDays);
    if (reminder === 0) return null;

    const keys = await trx("email_log").where({ invoice_id: invoiceId, kind: "invoice_reminder" }).pluck("dedupe_key");
    const pattern = new RegExp(`^invoice_reminder:${invoiceId}:(\\d+)$`);
    const highestSent = Math.max(0, ...keys.map((key) => Number(pattern.exec(String(key))?.[1] ?? 0)));
    if (highestSent >= reminder) return null;
    if (invoice.reminded_at && daysBetween(dateInZone(new Date(invoice.reminded_at), run.timeZone), run.today) < run.everyDays) return null;

    const doc = await invoiceDocument(trx, invoiceId);
    if (!doc || doc.balanceCents <= 0) return null;
    const to = doc.customer.email.trim();
    if (doc.customer.anonymised || !LOOKS_LIKE_ADDRESS.test(to)) return null;

    const dedupeKey = invoiceReminderDedupeKey(invoiceId, reminder);
    const content = overdueReminderEmail({
      customerName: doc.customer.name,
      invoiceNumber: doc.number,
      dueOn: doc.dueOn,
      daysOverdue,
      balanceCents: doc.balanceCents,
      payUrl: payLinkUrl(invoiceId, defaultPayLinkExpiry(run.now)),
    });
    const emailId = await queueEmail(trx, { kind: "invoice_reminder", to, ...content, customerId: doc.customer.id, invoiceId, dedupeKey });
    if (emailId === null) return null;

    await trx("invoices").where({ id: invoiceId }).update({ reminded_at: run.now, updated_at: trx.fn.now() as unknown as Date });
    await trx("audit_log").insert({
      actor_user_id: null,
      action: "invoice.reminder_queued",
      entity_type: "invoice",
      entity_id: String(invoiceId),
      before: invoice.reminded_at ? JSON.stringify({ remindedAt: invoice.reminded_at }) : null,
      after: JSON.stringify({ emailId, reminder, dedupeKey, daysOverdue, balanceCents: doc.balanceCents, to }),
    });
    return emailId;
  });
}
