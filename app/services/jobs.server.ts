import type { Knex } from "knex";
import PgBoss from "pg-boss";
import { loadBusinessSettings } from "~/models/settings.server";
import { serverEnv } from "./env.server";

// Background jobs on pg-boss 10, in the app's own PostgreSQL (schema "pgboss"). The web
// process only sends jobs; scripts/worker.ts works them, runs the cron schedule and the
// maintenance. One PgBoss instance per process, started on first use.

export const SEND_EMAIL_QUEUE = "send-email";
export const VISIT_REMINDERS_QUEUE = "visit-reminders";
/** After a visit's invoice is created: render its PDF and e-mail it (app/models/invoice-mail.server.ts). */
export const INVOICE_ISSUED_QUEUE = "invoice-issued";
/** Visit reminders go out at 09:00 in the business's time zone, the day before the visit. */
export const VISIT_REMINDER_HOUR = 9;
export const VISIT_REMINDER_CRON = `0 ${VISIT_REMINDER_HOUR} * * *`;
/** Overdue invoice reminders (app/models/invoice-reminders.server.ts): daily, at the visit reminders' hour. */
export const INVOICE_REMINDERS_QUEUE = "invoice-reminders";
export const INVOICE_REMINDER_HOUR = VISIT_REMINDER_HOUR;
export const INVOICE_REMINDER_CRON = `0 ${INVOICE_REMINDER_HOUR} * * *`;

export type SendEmailJob = { emailId: number };
/** serviceDate is optional: the cron job carries none, and the worker reminds for the day after the job was created. */
export type VisitRemindersJob = { serviceDate?: string };
export type InvoiceIssuedJob = { invoiceId: number };
/** No data: the worker reminds about what is overdue when the job runs. */
export type InvoiceRemindersJob = Record<string, never>;

type Role = "sender" | "worker";
type BossState = { role: Role; boss: PgBoss; ready: Promise<PgBoss> };

const globalForJobs = globalThis as unknown as { __varrouteJobs?: BossState };

function createBoss(role: Role): BossState {
  const boss = new PgBoss({
    connectionString: serverEnv().DATABASE_URL,
    application_name: `varroute-${role}`,
    max: role === "worker" ? 4 : 2,
    // Only the worker runs maintenance and the cron clock; the web process just sends.
    supervise: role === "worker",
    schedule: role === "worker",
  });
  boss.on("error", (error) => console.error(`[jobs] pg-boss: ${error.message}`));
  const ready = (async () => {
    await boss.start();
    await boss.createQueue(SEND_EMAIL_QUEUE, {
      name: SEND_EMAIL_QUEUE,
      // deliverEmail records SMTP failures itself (the sweep retries them); these retries
      // cover errors before that, e.g. the database going away mid-job.
      retryLimit: 5,
      retryDelay: 30,
      retryBackoff: true,
      expireInSeconds: 5 * 60,
    });
    await boss.createQueue(VISIT_REMINDERS_QUEUE, {
      name: VISIT_REMINDERS_QUEUE,
      retryLimit: 4,
      retryDelay: 120,
      retryBackoff: true,
      expireInSeconds: 15 * 60,
    });
    await boss.createQueue(INVOICE_REMINDERS_QUEUE, {
      name: INVOICE_REMINDERS_QUEUE,
      // Queueing is idempotent (dedupe key per invoice and reminder), so a retry sends nothing twice.
      retryLimit: 4,
      retryDelay: 120,
      retryBackoff: true,
      expireInSeconds: 15 * 60,
    });
    await boss.createQueue(INVOICE_ISSUED_QUEUE, {
      name: INVOICE_ISSUED_QUEUE,
      // Queueing the e-mail is idempotent (dedupe key per invoice), so a retry never sends twice.
      retryLimit: 6,
      retryDelay: 30,
      retryBackoff: true,
      expireInSeconds: 5 * 60,
    });
    return boss;
  })();
  return { role, boss, ready };
}

/**
 * The process's PgBoss, started and with every queue created. The first caller picks the
 * role: scripts/worker.ts asks for "worker" before anything else; everyone else gets a
 * sender. A failed start is forgotten, so the next call tries again.
 */
export async function jobsBoss(role: Role = "sender"): Promise<PgBoss> {
  let state = globalForJobs.__varrouteJobs;
  if (state && role === "worker" && state.role !== "worker") {
    throw new Error("jobsBoss: this process already runs a sender; ask for the worker first");
  }
  if (!state) {
    state = createBoss(role);
    globalForJobs.__varrouteJobs = state;
    const current = state;
    current.ready.catch(() => {
      if (globalForJobs.__varrouteJobs === current) globalForJobs.__varrouteJobs = undefined;
      current.boss.stop({ graceful: false }).catch(() => {});
    });
  }
  return state.ready;
}

/** Stops the process's PgBoss, letting running jobs finish for up to `timeoutMs`. */
export async function stopJobs(timeoutMs = 4000): Promise<void> {
  const state = globalForJobs.__varrouteJobs;
  if (!state) return;
  globalForJobs.__varrouteJobs = undefined;
  try {
    await state.ready;
  } catch {
    return; // never started
  }
  await state.boss.stop({ graceful: true, timeout: timeoutMs, wait: true });
}

function withTimeout<T>(promise: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`${what} took longer than ${ms} ms`)), ms);
  });
  return Promise.race([promise, timeout]).finally(() => clearTimeout(timer));
}

/**
 * After the transaction that queued them has committed: one "send-email" job per e-mail.
 * Never throws; a job that could not be sent is only logged, since the worker's sweep
 * delivers every due e-mail anyway (within about 15 seconds).
 */
export async function requestEmailDelivery(emailIds: number[]): Promise<void> {
  const ids = [...new Set(emailIds.filter((id) => Number.isSafeInteger(id) && id > 0))];
  if (ids.length === 0) return;
  try {
    await withTimeout(
      (async () => {
        const boss = await jobsBoss();
        await Promise.all(ids.map((emailId) => boss.send(SEND_EMAIL_QUEUE, { emailId } satisfies SendEmailJob)));
      })(),
      10_000,
      "sending e-mail delivery jobs",
    );
  } catch (error) {
    console.error(
      `[jobs] could not request delivery of e-mail ${ids.join(", ")} (the sweep will send it): ${error instanceof Error ? error.message : String(error)}`,
    );
  }
}

/**
 * Schedules the daily visit reminders at 09:00 in the business's time zone (from settings);
 * scheduling again replaces the schedule. Returns the time zone used. Worker only.
 */
export async function scheduleVisitReminders(db: Knex, boss?: PgBoss): Promise<string> {
  const { timeZone } = await loadBusinessSettings(db);
  const instance = boss ?? (await jobsBoss());
  await instance.schedule(VISIT_REMINDERS_QUEUE, VISIT_REMINDER_CRON, {}, { tz: timeZone });
  return timeZone;
}

/**
 * Schedules the daily overdue invoice reminders at 09:00 in the business's time zone (from
 * settings); scheduling again replaces the schedule. Returns the time zone used. Worker only.
 */
export async function scheduleInvoiceReminders(db: Knex, boss?: PgBoss): Promise<string> {
  const { timeZone } = await loadBusinessSettings(db);
  const instance = boss ?? (await jobsBoss());
  await instance.schedule(INVOICE_REMINDERS_QUEUE, INVOICE_REMINDER_CRON, {}, { tz: timeZone });
  return timeZone;
}
