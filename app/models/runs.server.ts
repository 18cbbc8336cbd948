import type { Knex } from "knex";

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
