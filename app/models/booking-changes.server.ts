import type { Knex } from "knex";
import { z } from "zod";
import { formatInstant } from "~/components/format";
import { changeDeadline, customerChangeBlock, whomToContact, type CustomerChangeBlock, type MoveWindow } from "~/domain/booking-cutoff";
import { isIsoDate } from "~/domain/courses";
import { loadBusinessSettings } from "./settings.server";
import { businessContact, customerChangeBlockMessage, customerChangeScope, laterBlockedMessage } from "./visit-changes.server";

// The customer's side of moving and cancelling a booked visit in the portal: what the change
// page shows, the form it posts, and which visits the bookings list links to it. The writes
// themselves are rescheduleVisit / cancelVisit with the customer as actor
// (app/models/visit-changes.server.ts).

/** The change page's two forms: move to a day, or cancel (the reason is optional). */
export const customerVisitChangeSchema = z.discriminatedUnion(
  "intent",
  [
    z.object({
      intent: z.literal("move"),
      toDate: z.string({ error: "Choose the new day." }).trim().refine(isIsoDate, { error: "Choose the new day on the calendar, or enter it as YYYY-MM-DD." }),
    }),
    z.object({
      intent: z.literal("cancel"),
      reason: z
        .string()
        .trim()
        .max(500, { error: "Keep the reason under 500 characters." })
        .optional()
        .transform((value) => (value ? value : null)),
    }),
  ],
  { error: "Choose to move the visit or to cancel it." },
);

export type BookingChangeRound = { roundNumber: number; date: string; status: string };

export type BookingChangeView = {
  visit: {
    id: number;
    yardId: number;
    yardName: string;
    yardAddress: string | null;
    serviceDate: string;
    status: string;
    timePreference: string;
    roundNumber: number;
    roundsPlanned: number;
    intervalDays: number;
    colonies: number;
    broodStatus: string;
  };
  /** Every round of the course booked so far, in order. */
  rounds: BookingChangeRound[];
  /** Why the customer cannot change it here (null: they can), and the sentence that says so with whom to call. */
  block: CustomerChangeBlock | "later_round" | null;
  blockMessage: string | null;
  cutoffHours: number;
  /** When changes close for this visit, in the business's time zone. */
  deadlineText: string;
  /** The days it may move to (null: none left). */
  window: MoveWindow | null;
  previousRound: BookingChangeRound | null;
  /** Later rounds still to come: they move with it, and are cancelled with it. */
  laterRounds: BookingChangeRound[];
  /** Rounds of the course not booked yet (booked after each visit): a cancellation drops them too. */
  roundsNotBooked: number;
  contact: string;
};

/** What the change page shows about one of the customer's visits; null when the visit is not theirs. */
export async function bookingChangeView(db: Knex, input: { customerId: number | string; visitId: number }, now = new Date()): Promise<BookingChangeView | null> {
  const row = await db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("courses", "courses.id", "visits.course_id")
    .where("visits.id", input.visitId)
    .where("yards.customer_id", input.customerId)
    .first(
      "visits.id",
      "visits.course_id",
      "visits.round_number",
      "visits.service_date",
      "visits.status",
      "visits.time_preference",
      "visits.colonies_expected",
      "courses.rounds_planned",
      "courses.interval_days",
      "courses.brood_status",
      "yards.id as yard_id",
      "yards.name as yard_name",
      "yards.address as yard_address",
    );
  if (!row) return null;
  const settings = await loadBusinessSettings(db);
  const scope = await customerChangeScope(db, { id: Number(row.id), course_id: row.course_id, round_number: row.round_number, interval_days: row.interval_days }, settings, now);
  const own = scope.rounds.find((r) => r.id === Number(row.id));
  let block: BookingChangeView["block"] = customerChangeBlock({
    status: row.status,
    onPublishedRun: own?.onPublishedRun ?? false,
    serviceDate: row.service_date,
    now,
    cutoffHours: settings.customerChangeCutoffHours,
    timeZone: settings.timeZone,
  });
  let blockMessage = block ? customerChangeBlockMessage(block, { serviceDate: row.service_date, settings }) : null;
  const contact = whomToContact(businessContact(settings));
  if (!block && scope.laterBlocked) {
    block = "later_round";
    blockMessage = laterBlockedMessage(scope.laterBlocked, settings);
  }
  const plain = (r: { roundNumber: number; date: string; status: string }): BookingChangeRound => ({ roundNumber: r.roundNumber, date: r.date, status: r.status });
  const bookedRounds = new Set(scope.rounds.map((r) => r.roundNumber));
  return {
    visit: {
      id: Number(row.id),
      yardId: Number(row.yard_id),
      yardName: row.yard_name,
      yardAddress: row.yard_address,
      serviceDate: row.service_date,
      status: row.status,
      timePreference: row.time_preference,
      roundNumber: row.round_number,
      roundsPlanned: row.rounds_planned,
      intervalDays: row.interval_days,
      colonies: row.colonies_expected,
      broodStatus: row.brood_status,
    },
    rounds: scope.rounds.map(plain),
    block,
    blockMessage,
    cutoffHours: settings.customerChangeCutoffHours,
    deadlineText: formatInstant(changeDeadline(row.service_date, settings.customerChangeCutoffHours, settings.timeZone), settings.timeZone),
    window: scope.window,
    previousRound: scope.previousRound ? plain(scope.previousRound) : null,
    laterRounds: scope.laterRounds.map(plain),
    roundsNotBooked: Array.from({ length: row.rounds_planned }, (_, i) => i + 1).filter((n) => n > row.round_number && !bookedRounds.has(n)).length,
    contact,
  };
}

export type ChangeableVisit = { visitId: number; bookingId: number; roundNumber: number; serviceDate: string };

/** The customer's scheduled visits from `today` on, by booking id: the bookings list links each to its change page. */
export async function scheduledVisitsByBooking(db: Knex, customerId: number | string, today: string): Promise<Record<number, ChangeableVisit[]>> {
  const rows = await db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("courses", "courses.id", "visits.course_id")
    .where("yards.customer_id", customerId)
    .where("visits.status", "scheduled")
    .where("visits.service_date", ">=", today)
    .whereNotNull("courses.booking_id")
    .orderBy([{ column: "visits.service_date" }, { column: "visits.round_number" }])
    .select("visits.id", "courses.booking_id", "visits.round_number", "visits.service_date");
  const out: Record<number, ChangeableVisit[]> = {};
  for (const r of rows) {
    const bookingId = Number(r.booking_id);
    (out[bookingId] ??= []).push({ visitId: Number(r.id), bookingId, roundNumber: r.round_number, serviceDate: r.service_date });
  }
  return out;
}
