import type { Knex } from "knex";

export type UpcomingVisit = {
  id: number;
  serviceDate: string;
  yardId: number;
  yardName: string;
  roundNumber: number;
  roundsPlanned: number;
  colonies: number;
  status: string;
  timePreference: string;
};

/** A customer's visits from `today` on, soonest first. */
export async function upcomingVisitsForCustomer(db: Knex, customerId: number | string, today: string): Promise<UpcomingVisit[]> {
  return db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("courses", "courses.id", "visits.course_id")
    .where("yards.customer_id", customerId)
    .where("visits.service_date", ">=", today)
    .whereIn("visits.status", ["scheduled", "in_progress", "deferred"])
    .orderBy([{ column: "visits.service_date" }, { column: "yards.name" }])
    .select(
      "visits.id",
      "visits.service_date as serviceDate",
      "yards.id as yardId",
      "yards.name as yardName",
      "visits.round_number as roundNumber",
      "courses.rounds_planned as roundsPlanned",
      "visits.colonies_expected as colonies",
      "visits.status",
      "visits.time_preference as timePreference",
    );
}

export type ServiceDay = {
  serviceDate: string;
  visits: number;
  colonies: number;
  routed: number;
  deferred: number;
};

/** Visits per service day over the next `days` days, with how many are on a run. */
export async function serviceDaysAhead(db: Knex, today: string, days: number): Promise<ServiceDay[]> {
  return db("visits")
    .leftJoin("stops", "stops.visit_id", "visits.id")
    .where("visits.service_date", ">=", today)
    .whereRaw("visits.service_date < ?::date + ?::int", [today, days])
    .whereNot("visits.status", "cancelled")
    .groupBy("visits.service_date")
    .orderBy("visits.service_date")
    .select(
      "visits.service_date as serviceDate",
      db.raw("count(*)::int as visits"),
      db.raw("sum(visits.colonies_expected)::int as colonies"),
      db.raw("count(stops.id)::int as routed"),
      db.raw("count(*) filter (where visits.status = 'deferred')::int as deferred"),
    );
}

export type CustomerBooking = {
  id: number;
  serviceDate: string;
  yardId: number;
  yardName: string;
  colonies: number;
  timePreference: string;
  status: string;
  createdAt: Date;
  roundsPlanned: number | null;
  roundsDone: number;
  nextRoundDate: string | null;
};

/** A customer's bookings, newest day first, with how far each course has got. */
export async function bookingsForCustomer(db: Knex, customerId: number | string): Promise<CustomerBooking[]> {
  return db("bookings")
    .join("yards", "yards.id", "bookings.yard_id")
    .leftJoin("courses", "courses.booking_id", "bookings.id")
    .where("bookings.customer_id", customerId)
    .orderBy([{ column: "bookings.service_date", order: "desc" }, { column: "bookings.id", order: "desc" }])
    .select(
      "bookings.id",
      "bookings.service_date as serviceDate",
      "yards.id as yardId",
      "yards.name as yardName",
      "bookings.colonies",
      "bookings.time_preference as timePreference",
      "bookings.status",
      "bookings.created_at as createdAt",
      "courses.rounds_planned as roundsPlanned",
      db.raw("(select count(*)::int from visits v where v.course_id = courses.id and v.status = 'done') as \"roundsDone\""),
      db.raw("(select min(v.service_date) from visits v where v.course_id = courses.id and v.status in ('scheduled', 'in_progress')) as \"nextRoundDate\""),
    );
}

export type CalendarVisit = {
  id: number;
  serviceDate: string;
  status: string;
  yardId: number;
  yardName: string;
  customerName: string;
  colonies: number;
  roundNumber: number;
  timePreference: string;
  crewId: number | null;
  crewName: string | null;
};

/** Every visit between two days (inclusive) with the crew whose run it is on, if any. */
export async function visitsBetween(db: Knex, from: string, to: string): Promise<CalendarVisit[]> {
  return db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .leftJoin("stops", "stops.visit_id", "visits.id")
    .leftJoin("runs", "runs.id", "stops.run_id")
    .leftJoin("crews", "crews.id", "runs.crew_id")
    .whereBetween("visits.service_date", [from, to])
    .orderBy([{ column: "visits.service_date" }, { column: "crews.name" }, { column: "stops.position" }, { column: "yards.name" }])
    .select(
      "visits.id",
      "visits.service_date as serviceDate",
      "visits.status",
      "yards.id as yardId",
      "yards.name as yardName",
      "customers.name as customerName",
      "visits.colonies_expected as colonies",
      "visits.round_number as roundNumber",
      "visits.time_preference as timePreference",
      "crews.id as crewId",
      "crews.name as crewName",
    );
}

export type VisitDetail = CalendarVisit & {
  roundsPlanned: number;
  customerId: number;
  customerEmail: string;
  customerPhone: string | null;
  accessNotes: string;
  notes: string | null;
  deferReason: string | null;
  address: string | null;
};

export async function getVisitDetail(db: Knex, visitId: number): Promise<VisitDetail | null> {
  const row = await db("visits")
    .join("courses", "courses.id", "visits.course_id")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .leftJoin("stops", "stops.visit_id", "visits.id")
    .leftJoin("runs", "runs.id", "stops.run_id")
    .leftJoin("crews", "crews.id", "runs.crew_id")
    .where("visits.id", visitId)
    .first(
      "visits.id",
      "visits.service_date as serviceDate",
      "visits.status",
      "yards.id as yardId",
      "yards.name as yardName",
      "yards.address",
      "yards.access_notes as accessNotes",
      "customers.id as customerId",
      "customers.name as customerName",
      "customers.email as customerEmail",
      "customers.phone as customerPhone",
      "visits.colonies_expected as colonies",
      "visits.round_number as roundNumber",
      "courses.rounds_planned as roundsPlanned",
      "visits.time_preference as timePreference",
      "visits.notes",
      "visits.defer_reason as deferReason",
      "crews.id as crewId",
      "crews.name as crewName",
    );
  return (row as VisitDetail | undefined) ?? null;
}
