import { data } from "react-router";
import type { Knex } from "knex";
import type { BoxType } from "~/domain/box-types";

export type YardSummary = {
  id: number;
  name: string;
  customerId: number;
  customerName: string;
  lat: number;
  lng: number;
  address: string | null;
  accessNotes: string;
  colonyCount: number;
  broodBoxesPerColony: number;
  boxType: BoxType;
  broodStatus: string;
  supersOff: boolean;
  nextVisitDate: string | null;
};

function yardQuery(db: Knex, today: string) {
  return db("yards")
    .join("customers", "customers.id", "yards.customer_id")
    .whereNull("yards.archived_at")
    .select(
      "yards.id",
      "yards.name",
      "yards.customer_id as customerId",
      "customers.name as customerName",
      "yards.lat",
      "yards.lng",
      "yards.address",
      "yards.access_notes as accessNotes",
      "yards.colony_count as colonyCount",
      "yards.brood_boxes_per_colony as broodBoxesPerColony",
      "yards.box_type as boxType",
      "yards.brood_status as broodStatus",
      "yards.supers_off as supersOff",
      db("visits")
        .min("service_date")
        .whereRaw("visits.yard_id = yards.id")
        .where("service_date", ">=", today)
        .whereIn("status", ["scheduled", "in_progress"])
        .as("nextVisitDate"),
    );
}

export async function listYardsForCustomer(db: Knex, customerId: number | string, today: string): Promise<YardSummary[]> {
  return yardQuery(db, today).where("yards.customer_id", customerId).orderBy("yards.name");
}

/** One yard of one customer; any other yard id is a 404, whether it exists or not. */
export async function getYardForCustomer(db: Knex, customerId: number | string, yardId: string, today: string): Promise<YardSummary> {
  const yard = /^\d+$/.test(yardId) ? await yardQuery(db, today).where("yards.id", yardId).where("yards.customer_id", customerId).first() : null;
  if (!yard) throw data("There is no yard with that number in your account.", { status: 404 });
  return yard;
}

export async function getYard(db: Knex, yardId: string, today: string): Promise<YardSummary> {
  const yard = /^\d+$/.test(yardId) ? await yardQuery(db, today).where("yards.id", yardId).first() : null;
  if (!yard) throw data("There is no yard with that number.", { status: 404 });
  return yard;
}

export type ColonySummary = { id: number; label: string; broodBoxes: number; boxType: BoxType; broodStatus: string; active: boolean };

export async function listColonies(db: Knex, yardId: number): Promise<ColonySummary[]> {
  return db("colonies")
    .where({ yard_id: yardId })
    .orderByRaw("length(label), label")
    .select("id", "label", "brood_boxes as broodBoxes", "box_type as boxType", "brood_status as broodStatus", "active");
}

export type YardVisit = {
  id: number;
  serviceDate: string;
  roundNumber: number;
  roundsPlanned: number;
  status: string;
  treated: number;
  skipped: number;
  grams: number;
};

/** Every visit to a yard with its tally totals, newest first. */
export async function listYardVisits(db: Knex, yardId: number): Promise<YardVisit[]> {
  return db("visits")
    .join("courses", "courses.id", "visits.course_id")
    .leftJoin("tallies", "tallies.visit_id", "visits.id")
    .where("visits.yard_id", yardId)
    .groupBy("visits.id", "courses.rounds_planned")
    .orderBy("visits.service_date", "desc")
    .select(
      "visits.id",
      "visits.service_date as serviceDate",
      "visits.round_number as roundNumber",
      "courses.rounds_planned as roundsPlanned",
      "visits.status",
      db.raw("count(*) filter (where tallies.outcome = 'treated')::int as treated"),
      db.raw("count(*) filter (where tallies.outcome = 'skipped')::int as skipped"),
      db.raw("coalesce(sum(tallies.dose_grams), 0)::float as grams"),
    );
}

export type BookedRound = { roundNumber: number; date: string; status: "scheduled" | "deferred" | "in_progress" | "done" | "cancelled" };

/** The rounds of the yard's current course (the newest one not cancelled), or none. */
export async function currentCourseRounds(db: Knex, yardId: number): Promise<BookedRound[]> {
  const course = await db("courses").where({ yard_id: yardId }).whereNot("status", "cancelled").orderBy("created_at", "desc").orderBy("id", "desc").first("id");
  if (!course) return [];
  return db("visits")
    .where({ course_id: course.id })
    .orderBy("round_number")
    .select("round_number as roundNumber", "service_date as date", "status");
}
