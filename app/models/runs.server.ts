import type { Knex } from "knex";

export type RunStop = {
  stopId: number;
  position: number;
  visitId: number;
  visitStatus: string;
  arriveAt: Date;
  leaveAt: Date;
  yardId: number;
  yardName: string;
  customerName: string;
  address: string | null;
  lat: number;
  lng: number;
  accessNotes: string;
  colonies: number;
  broodBoxesPerColony: number;
  roundNumber: number;
};

export type CrewRun = {
  id: number;
  crewId: number;
  crewName: string;
  serviceDate: string;
  status: string;
  driveSeconds: number;
  driveMeters: number;
  safetyCheckedAt: Date | null;
  stops: RunStop[];
};

async function stopsForRun(db: Knex, runId: number): Promise<RunStop[]> {
  return db("stops")
    .join("visits", "visits.id", "stops.visit_id")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .where("stops.run_id", runId)
    .orderBy("stops.position")
    .select(
      "stops.id as stopId",
      "stops.position",
      "visits.id as visitId",
      "visits.status as visitStatus",
      "stops.arrive_at as arriveAt",
      "stops.leave_at as leaveAt",
      "yards.id as yardId",
      "yards.name as yardName",
      "customers.name as customerName",
      "yards.address",
      "yards.lat",
      "yards.lng",
      "yards.access_notes as accessNotes",
      "visits.colonies_expected as colonies",
      "yards.brood_boxes_per_colony as broodBoxesPerColony",
      "visits.round_number as roundNumber",
    );
}

/** The crew's published run for a day, with its stops in order; null when none. */
export async function publishedRunForCrew(db: Knex, crewId: number | string, serviceDate: string): Promise<CrewRun | null> {
  const run = await db("runs")
    .join("crews", "crews.id", "runs.crew_id")
    .where("runs.crew_id", crewId)
    .where("runs.service_date", serviceDate)
    .whereIn("runs.status", ["published", "in_progress", "done"])
    .first(
      "runs.id",
      "runs.crew_id as crewId",
      "crews.name as crewName",
      "runs.service_date as serviceDate",
      "runs.status",
      "runs.drive_seconds as driveSeconds",
      "runs.drive_meters as driveMeters",
      "runs.safety_checked_at as safetyCheckedAt",
    );
  if (!run) return null;
  return { ...run, stops: await stopsForRun(db, run.id) };
}

/** The next published run of a crew after `serviceDate`, for "nothing today" screens. */
export async function nextPublishedRunDate(db: Knex, crewId: number | string, serviceDate: string): Promise<string | null> {
  const row = await db("runs")
    .where("crew_id", crewId)
    .where("service_date", ">", serviceDate)
    .whereIn("status", ["published", "in_progress"])
    .orderBy("service_date")
    .first("service_date");
  return row?.service_date ?? null;
}

export type RunOverview = { crewId: number; crewName: string; serviceDate: string; status: string; stops: number; colonies: number };

/** Every crew's run between two dates (inclusive), for the dispatcher's overview. */
export async function runsBetween(db: Knex, from: string, to: string): Promise<RunOverview[]> {
  return db("runs")
    .join("crews", "crews.id", "runs.crew_id")
    .leftJoin("stops", "stops.run_id", "runs.id")
    .leftJoin("visits", "visits.id", "stops.visit_id")
    .whereBetween("runs.service_date", [from, to])
    .groupBy("runs.id", "crews.name")
    .orderBy([{ column: "runs.service_date" }, { column: "crews.name" }])
    .select(
      "runs.crew_id as crewId",
      "crews.name as crewName",
      "runs.service_date as serviceDate",
      "runs.status",
      db.raw("count(stops.id)::int as stops"),
      db.raw("coalesce(sum(visits.colonies_expected), 0)::int as colonies"),
    );
}

/** A crew's published runs from `fromDate` on (at most `limit`), for "coming runs" lists. */
export async function comingRunsForCrew(db: Knex, crewId: number | string, fromDate: string, limit = 10) {
  return db("runs")
    .leftJoin("stops", "stops.run_id", "runs.id")
    .leftJoin("visits", "visits.id", "stops.visit_id")
    .where("runs.crew_id", crewId)
    .where("runs.service_date", ">=", fromDate)
    .whereIn("runs.status", ["published", "in_progress"])
    .groupBy("runs.id")
    .orderBy("runs.service_date")
    .limit(limit)
    .select("runs.id", "runs.service_date as serviceDate", db.raw("count(stops.id)::int as stops"), db.raw("coalesce(sum(visits.colonies_expected), 0)::int as colonies")) as Promise<
    { id: number; serviceDate: string; stops: number; colonies: number }[]
  >;
}
