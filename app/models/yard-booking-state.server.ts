import type { Knex } from "knex";

// The one definition of where a yard stands with bookings. The yards table
// (customers.server.ts) and the dispatcher's map (yard-map.server.ts) both read it, so the
// two can never tell a different story about the same yard.

/**
 * Where a yard stands with bookings on a given day `today`, the first that applies:
 * - booked: a visit (scheduled or in progress) on or after today;
 * - requested: a customer's booking request on or after today that the office has not yet
 *   confirmed (bookings.status = 'requested');
 * - in_course: a course is active but its next round has no visit booked ahead (the round's
 *   visit is deferred, overdue or not made yet);
 * - not_booked: booked or served before (any booking or course, even cancelled or done),
 *   nothing ahead now;
 * - never_booked: no booking and no course, ever.
 */
export const YARD_BOOKING_STATES = ["booked", "requested", "in_course", "not_booked", "never_booked"] as const;
export type YardBookingState = (typeof YARD_BOOKING_STATES)[number];

export function isYardBookingState(value: unknown): value is YardBookingState {
  return typeof value === "string" && (YARD_BOOKING_STATES as readonly string[]).includes(value);
}

/** Visit statuses that count as a visit booked ahead (a deferred visit still needs a day). */
const BOOKED_VISIT = ["scheduled", "in_progress"] as const;

/** A yard's row in yardBookingStates. Dates are calendar dates (yyyy-mm-dd). */
export type YardBookingStateRow = {
  yard_id: number;
  /** The first booked visit on or after today. */
  next_visit_date: string | null;
  /** The first unconfirmed booking request on or after today. */
  requested_date: string | null;
  booking_state: YardBookingState;
};

/**
 * A subquery with one YardBookingStateRow per yard (every yard, archived or not: callers
 * choose which yards they show), to join on `yard_id`. One query, no query per yard.
 */
export function yardBookingStates(db: Knex, today: string): Knex.QueryBuilder {
  const nextVisits = db("visits")
    .where("service_date", ">=", today)
    .whereIn("status", BOOKED_VISIT)
    .groupBy("yard_id")
    .select("yard_id", db.raw("min(service_date) as next_visit_date"));
  const requests = db("bookings")
    .where("service_date", ">=", today)
    .where("status", "requested")
    .groupBy("yard_id")
    .select("yard_id", db.raw("min(service_date) as requested_date"));
  // Finishing a course's last round marks it complete in the same transaction
  // (tallies.server.ts), so an active course always has a round still to come.
  const courses = db("courses").groupBy("yard_id").select("yard_id", db.raw("bool_or(status = 'active') as active"));
  const everBooked = db("bookings").groupBy("yard_id").select("yard_id");

  return db("yards as bs_y")
    .leftJoin(nextVisits.as("bs_nv"), "bs_nv.yard_id", "bs_y.id")
    .leftJoin(requests.as("bs_rq"), "bs_rq.yard_id", "bs_y.id")
    .leftJoin(courses.as("bs_co"), "bs_co.yard_id", "bs_y.id")
    .leftJoin(everBooked.as("bs_eb"), "bs_eb.yard_id", "bs_y.id")
    .select(
      "bs_y.id as yard_id",
      "bs_nv.next_visit_date",
      "bs_rq.requested_date",
      db.raw(`case
        when bs_nv.next_visit_date is not null then 'booked'
        when bs_rq.requested_date is not null then 'requested'
        when bs_co.active then 'in_course'
        when bs_co.yard_id is null and bs_eb.yard_id is null then 'never_booked'
        else 'not_booked' end as booking_state`),
    );
}
