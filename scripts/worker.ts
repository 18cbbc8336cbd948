// The background worker: delivers queued e-mail and sends the daily visit and overdue
// invoice reminders.
// Usage: npm run worker   (DATABASE_URL picks the database; SMTP_* / MAIL_FROM as the app)
// scripts/start.sh and scripts/test.sh run it beside the app. Stops cleanly on SIGINT/SIGTERM.
//
// - "send-email" jobs (sent after commit by requestEmailDelivery): deliverEmail per job;
//   SMTP failures are recorded on the row and retried by the sweep with backoff, other
//   errors are retried by pg-boss with backoff.
// - "visit-reminders" (daily cron at 09:00 business time): queue reminders for the
//   business's tomorrow, then request their delivery.
// - "invoice-reminders" (daily cron at 09:00 business time): queue the overdue invoice
//   reminders due today (queueOverdueReminders), then request their delivery.
// - "invoice-issued" jobs (sent after a visit's invoice is created, requestInvoiceEmail):
//   render the PDF, queue the invoice e-mail once (dedupe key invoice:<id>), deliver it.
// - every 15 s, a sweep delivers any queued or failed e-mail that is due, queues the e-mail
//   of recent invoices never e-mailed (a lost "invoice-issued" job; queueUnsentInvoiceEmails)
//   and requests its delivery, and reschedules both daily jobs when the time zone changes.
// - at start, after 09:00 business time, both daily jobs run once to catch up (a second
//   run the same day queues nothing).
import type PgBoss from "pg-boss";
import { deliverEmail, deliverQueuedEmails, EmailNotFoundError } from "~/models/emails.server";
import { handleInvoiceIssued, queueUnsentInvoiceEmails } from "~/models/invoice-mail.server";
import { queueOverdueReminders } from "~/models/invoice-reminders.server";
import { anonymiseExpiredRecordHolds } from "~/models/record-retention.server";
import { queueVisitReminders, reminderDateFor } from "~/models/reminders.server";
import { deleteExpiredSessions } from "~/models/sessions.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import {
  INVOICE_ISSUED_QUEUE,
  INVOICE_REMINDER_HOUR,
  INVOICE_REMINDERS_QUEUE,
  jobsBoss,
  requestEmailDelivery,
  scheduleInvoiceReminders,
  scheduleVisitReminders,
  SEND_EMAIL_QUEUE,
  stopJobs,
  VISIT_REMINDER_HOUR,
  VISIT_REMINDERS_QUEUE,
  type InvoiceIssuedJob,
  type InvoiceRemindersJob,
  type SendEmailJob,
  type VisitRemindersJob,
} from "~/services/jobs.server";

const SWEEP_INTERVAL_MS = 15_000;

function log(message: string) {
  console.log(`${new Date().toISOString()} worker: ${message}`);
}

function errorText(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}

async function sendEmailJob(jobs: PgBoss.Job<SendEmailJob>[]) {
  let failure: unknown = null;
  for (const job of jobs) {
    const emailId = Number(job.data?.emailId);
    try {
      log(`email ${emailId}: ${await deliverEmail(db, emailId)} (job ${job.id})`);
    } catch (error) {
      if (error instanceof EmailNotFoundError) {
        log(`email ${emailId}: not in email_log, job ${job.id} dropped`);
        continue;
      }
      log(`email ${emailId}: error, pg-boss retries the batch with job ${job.id}: ${errorText(error)}`);
      failure ??= error;
    }
  }
  // pg-boss retries the whole batch with backoff; e-mails sent meanwhile come back "already-sent".
  if (failure) throw failure;
}

async function visitRemindersJob(jobs: PgBoss.JobWithMetadata<VisitRemindersJob>[]) {
  for (const job of jobs) {
    // A cron job reminds about the day after it was created, even if it runs late.
    const serviceDate = job.data?.serviceDate ?? (await reminderDateFor(db, job.createdOn ? new Date(job.createdOn) : new Date()));
    const ids = await queueVisitReminders(db, serviceDate);
    log(`visit reminders for ${serviceDate}: ${ids.length} queued (job ${job.id})`);
    await requestEmailDelivery(ids);
  }
}

async function invoiceRemindersJob(jobs: PgBoss.Job<InvoiceRemindersJob>[]) {
  for (const job of jobs) {
    const ids = await queueOverdueReminders(db);
    log(`overdue invoice reminders: ${ids.length} queued (job ${job.id})`);
    await requestEmailDelivery(ids);
  }
}

async function invoiceIssuedJob(jobs: PgBoss.Job<InvoiceIssuedJob>[]) {
  for (const job of jobs) {
    const invoiceId = Number(job.data?.invoiceId);
    // Errors are thrown for pg-boss to retry; a retry never queues or sends the e-mail twice.
    const { queued, delivery } = await handleInvoiceIssued(db, invoiceId);
    const detail = queued.status === "skipped" ? `skipped (${queued.reason})` : `${queued.status} as email ${queued.emailId}`;
    log(`invoice ${invoiceId}: e-mail ${detail}${delivery ? `, ${delivery}` : ""} (job ${job.id})`);
  }
}

const hourText = (hour: number) => `${String(hour).padStart(2, "0")}:00`;

/** Schedules both daily jobs in the business's time zone; returns it. */
async function scheduleDailyJobs(boss?: PgBoss): Promise<string> {
  const visitZone = await scheduleVisitReminders(db, boss);
  log(`visit reminders scheduled daily at ${hourText(VISIT_REMINDER_HOUR)} ${visitZone}`);
  const invoiceZone = await scheduleInvoiceReminders(db, boss);
  log(`overdue invoice reminders scheduled daily at ${hourText(INVOICE_REMINDER_HOUR)} ${invoiceZone}`);
  // Settings changed between the two: the next sweep schedules both again.
  return visitZone === invoiceZone ? visitZone : "";
}

let scheduledTimeZone = "";

async function sweep() {
  // Each step on its own: one failing does not hold up the others.
  try {
    const sent = await deliverQueuedEmails(db, 50, {
      onResult: (emailId, result) => log(`sweep: email ${emailId}: ${result instanceof Error ? `error: ${result.message}` : result}`),
    });
    if (sent > 0) log(`sweep: ${sent} sent`);
  } catch (error) {
    log(`sweep: delivery failed: ${errorText(error)}`);
  }
  try {
    const ids = await queueUnsentInvoiceEmails(db);
    if (ids.length > 0) {
      log(`sweep: ${ids.length} invoice e-mail(s) never sent queued now: ${ids.join(", ")}`);
      await requestEmailDelivery(ids);
    }
  } catch (error) {
    log(`sweep: invoice e-mail catch-up failed: ${errorText(error)}`);
  }
  try {
    // Follow a change of the business's time zone in settings.
    const { timeZone } = await loadBusinessSettings(db);
    if (timeZone !== scheduledTimeZone) scheduledTimeZone = await scheduleDailyJobs();
  } catch (error) {
    log(`sweep: rescheduling failed: ${errorText(error)}`);
  }
  try {
    const ended = await deleteExpiredSessions(db);
    if (ended > 0) log(`sweep: ${ended} expired session(s) deleted`);
  } catch (error) {
    log(`sweep: deleting expired sessions failed: ${errorText(error)}`);
  }
  try {
    // Deleted customers whose application records no longer need their name and places.
    const { timeZone } = await loadBusinessSettings(db);
    const { anonymised, failed } = await anonymiseExpiredRecordHolds(db, dateInZone(new Date(), timeZone));
    if (anonymised.length > 0) log(`sweep: record fields of ${anonymised.length} deleted customer(s) anonymised: ${anonymised.join(", ")}`);
    for (const f of failed) log(`sweep: anonymising the records of customer ${f.customerId} failed: ${errorText(f.error)}`);
  } catch (error) {
    log(`sweep: anonymising expired record holds failed: ${errorText(error)}`);
  }
}

async function main() {
  const boss = await jobsBoss("worker");
  log("pg-boss started");
  scheduledTimeZone = await scheduleDailyJobs(boss);

  await boss.work<SendEmailJob>(SEND_EMAIL_QUEUE, { batchSize: 5, pollingIntervalSeconds: 1 }, sendEmailJob);
  await boss.work<VisitRemindersJob>(VISIT_REMINDERS_QUEUE, { includeMetadata: true, pollingIntervalSeconds: 5 }, visitRemindersJob);
  await boss.work<InvoiceRemindersJob>(INVOICE_REMINDERS_QUEUE, { pollingIntervalSeconds: 5 }, invoiceRemindersJob);
  await boss.work<InvoiceIssuedJob>(INVOICE_ISSUED_QUEUE, { pollingIntervalSeconds: 2 }, invoiceIssuedJob);
  log(`working "${SEND_EMAIL_QUEUE}", "${VISIT_REMINDERS_QUEUE}", "${INVOICE_REMINDERS_QUEUE}" and "${INVOICE_ISSUED_QUEUE}"`);

  // Catch up when started after today's reminder time (a second run queues nothing new).
  const now = new Date();
  const { timeZone } = await loadBusinessSettings(db);
  const localHour = Number(new Intl.DateTimeFormat("en-US", { hour: "numeric", hourCycle: "h23", timeZone }).format(now));
  if (localHour >= VISIT_REMINDER_HOUR) {
    const serviceDate = await reminderDateFor(db, now);
    await boss.send(VISIT_REMINDERS_QUEUE, { serviceDate } satisfies VisitRemindersJob);
    log(`catch-up: visit reminders for ${serviceDate} requested (it is past ${hourText(VISIT_REMINDER_HOUR)} on ${dateInZone(now, timeZone)})`);
  }
  if (localHour >= INVOICE_REMINDER_HOUR) {
    await boss.send(INVOICE_REMINDERS_QUEUE, {} satisfies InvoiceRemindersJob);
    log(`catch-up: overdue invoice reminders requested (it is past ${hourText(INVOICE_REMINDER_HOUR)} on ${dateInZone(now, timeZone)})`);
  }

  let sweeping: Promise<void> | null = null;
  const runSweep = () => {
    sweeping ??= sweep().finally(() => {
      sweeping = null;
    });
  };
  runSweep();
  const timer = setInterval(runSweep, SWEEP_INTERVAL_MS);
  log(`sweeping due e-mail every ${SWEEP_INTERVAL_MS / 1000} s`);

  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    log(`${signal}: stopping`);
    clearInterval(timer);
    try {
      await sweeping;
      await stopJobs(4000);
      await db.destroy();
      log("stopped");
      process.exitCode = 0;
    } catch (error) {
      log(`stopping failed: ${errorText(error)}`);
      process.exitCode = 1;
    }
    // Leave at once if some handle still holds the event loop.
    setTimeout(() => process.exit(), 500).unref();
  };
  process.on("SIGINT", () => void stop("SIGINT"));
  process.on("SIGTERM", () => void stop("SIGTERM"));
}

main().catch(async (error: unknown) => {
  log(`failed to start: ${error instanceof Error ? (error.stack ?? error.message) : String(error)}`);
  await stopJobs(0).catch(() => {});
  await db.destroy().catch(() => {});
  process.exit(1);
});
