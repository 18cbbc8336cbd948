import type { Knex } from "knex";
import { visitReminderEmail } from "~/emails/booking";
import { queueEmail } from "~/models/emails.server";
import { loadBusinessSettings } from "~/models/settings.server";
import type { TimePreference } from "~/models/tables";
import { dateInZone } from "~/services/clock.server";
import { serverEnv } from "~/services/env.server";

// Visit reminders: the day before a service day, one e-mail per customer listing every
// yard of theirs with a scheduled visit that day. The dedupe key makes it once per
// customer per day, however often the job runs.

export function visitReminderDedupeKey(customerId: number, serviceDate: string): string {
  return `visit_reminder:${customerId}:${serviceDate}`;
}

/** The service day to remind about when the reminder job runs at `instant`: the business's tomorrow. */
export async function reminderDateFor(db: Knex, instant: Date = new Date()): Promise<string> {
  const { timeZone } = await loadBusinessSettings(db);
  const today = dateInZone(instant, timeZone);
  const next = new Date(`${today}T00:00:00Z`);
  next.setUTCDate(next.getUTCDate() + 1);
  return next.toISOString().slice(0, 10);
}

type ReminderVisit = {
  visitId: number;
  timePreference: TimePreference;
  colonies: number;
  yardId: number;
  yardName: string;
  customerId: number;
  customerName: string;
  email: string;
};

/**
 * Queues one reminder per customer for the scheduled visits on `serviceDate` (YYYY-MM-DD).
 * Returns the ids of the e-mails queued now; customers reminded before are left out.
 */
export async function queueVisitReminders(db: Knex, serviceDate: string): Promise<number[]> {
  if (!/^\d{4}-\d{2}-\d{2}$/.test(serviceDate)) throw new RangeError(`queueVisitReminders: "${serviceDate}" is not a YYYY-MM-DD date`);
  const visits: ReminderVisit[] = await db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .where("visits.service_date", serviceDate)
    .where("visits.status", "scheduled")
    .whereNull("customers.anonymised_at")
    .orderBy([{ column: "customers.id" }, { column: "yards.name" }, { column: "visits.id" }])
    .select(
      "visits.id as visitId",
      "visits.time_preference as timePreference",
      "visits.colonies_expected as colonies",
      "yards.id as yardId",
      "yards.name as yardName",
      "customers.id as customerId",
      "customers.name as customerName",
      "customers.email as email",
    );

  const byCustomer = new Map<number, ReminderVisit[]>();
  for (const visit of visits) {
    const list = byCustomer.get(Number(visit.customerId)) ?? [];
    list.push(visit);
    byCustomer.set(Number(visit.customerId), list);
  }

  const portalUrl = new URL("/portal/bookings", serverEnv().APP_URL).toString();
  const queued: number[] = [];
  for (const [customerId, list] of byCustomer) {
    const first = list[0];
    const yards = new Map<number, { name: string; colonies: number }>();
    for (const visit of list) {
      const yard = yards.get(visit.yardId) ?? { name: visit.yardName, colonies: 0 };
      yard.colonies += visit.colonies;
      yards.set(visit.yardId, yard);
    }
    const preferences = new Set(list.map((v) => v.timePreference));
    const content = visitReminderEmail({
      customerName: first.customerName,
      serviceDate,
      timePreference: preferences.size === 1 ? first.timePreference : "any",
      yards: [...yards.values()],
      portalUrl,
    });
    try {
      const id = await queueEmail(db, {
        kind: "visit_reminder",
        to: first.email,
        ...content,
        customerId,
        visitId: list.length === 1 ? first.visitId : null,
        dedupeKey: visitReminderDedupeKey(customerId, serviceDate),
      });
      if (id !== null) queued.push(id);
    } catch (error) {
      // One customer's bad address must not hold up everyone else's reminder.
      console.error(`[reminders] customer ${customerId}: ${error instanceof Error ? error.message : String(error)}`);
    }
  }
  return queued;
}
