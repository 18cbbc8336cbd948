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
