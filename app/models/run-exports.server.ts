import type { Knex } from "knex";
import { doseGramsForRun } from "~/domain/dose";
import { gramsAtDosePerColony } from "~/domain/yard-colony-doses";
import type { RunExport } from "~/domain/exports/run-export";
import { zonedClockTime } from "~/domain/zoned-time";
import type { BoxType } from "~/domain/box-types";
import { colonyDose } from "~/domain/treatment-plan";
import { CREW_VISIBLE_RUN_STATUSES } from "./day-plan.server";
import { loadBusinessSettings } from "./settings.server";
import { plannedYardDoses } from "./yard-doses.server";
import type { SessionUser } from "./users.server";

// Runs as exports (GPX, iCalendar) for whoever may see them: the dispatcher and the owner
// any run; a crew member only a published (or started, or done) run of their own crew.
// Everyone else gets null, which the resource routes answer with 404.

const STAFF_WITH_EVERY_RUN = ["dispatcher", "owner"];

async function mayExport(db: Knex, run: { crew_id: number; status: string }, user: Pick<SessionUser, "id" | "role">): Promise<boolean> {
  if (STAFF_WITH_EVERY_RUN.includes(user.role)) return true;
  if (user.role !== "crew") return false;
  if (!(CREW_VISIBLE_RUN_STATUSES as readonly string[]).includes(run.status)) return false;
  const member = await db("crew_members").where({ crew_id: run.crew_id, user_id: Number(user.id) }).first("user_id");
  return Boolean(member);
}

/** The run with its stops for an export, or null when it does not exist or the user may not see it. */
export async function runExportForUser(
  db: Knex,
  runId: number,
  user: Pick<SessionUser, "id" | "role">,
  now = new Date(),
): Promise<RunExport | null> {
  if (!Number.isSafeInteger(runId) || runId <= 0) return null;
  const run = await db("runs")
    .join("crews", "crews.id", "runs.crew_id")
    .where("runs.id", runId)
    .first(
      "runs.id",
      "runs.crew_id",
      "runs.service_date",
      "runs.status",
      "runs.version",
      "crews.name as crew_name",
      "crews.start_label",
      "crews.start_lat",
      "crews.start_lng",
      "crews.end_label",
      "crews.end_lat",
      "crews.end_lng",
    );
  if (!run || !(await mayExport(db, run, user))) return null;
  const settings = await loadBusinessSettings(db);
  const rows = (await db("stops")
    .join("visits", "visits.id", "stops.visit_id")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .where("stops.run_id", run.id)
    .orderBy([{ column: "stops.position" }, { column: "stops.id" }])
    .select(
      "visits.id as visit_id",
      "visits.colonies_expected",
      "yards.id as yard_id",
      "yards.name as yard_name",
      "yards.address",
      "yards.lat",
      "yards.lng",
      "yards.access_notes",
      "yards.brood_boxes_per_colony",
      "yards.box_type",
      "customers.name as customer_name",
      "stops.arrive_at",
      "stops.start_at",
      "stops.leave_at",
    )) as {
    visit_id: number;
    colonies_expected: number;
    yard_id: number;
    yard_name: string;
    address: string | null;
    lat: number;
    lng: number;
    access_notes: string;
    brood_boxes_per_colony: number;
    box_type: BoxType;
    customer_name: string;
    arrive_at: Date;
    start_at: Date;
    leave_at: Date;
  }[];
  // Grams as the run was planned: each yard's colonies as the crew last found them.
  const planned = await plannedYardDoses(db, settings, rows.map((row) => Number(row.yard_id)));
  const stops = rows.map((row, i) => {
    const arriveAt = new Date(row.arrive_at);
    const startAt = new Date(row.start_at);
    return {
      visitId: Number(row.visit_id),
      number: i + 1,
      yardName: row.yard_name,
      customerName: row.customer_name,
      address: row.address,
      lat: Number(row.lat),
      lng: Number(row.lng),
      accessNotes: row.access_notes,
      colonies: row.colonies_expected,
      broodBoxesPerColony: row.brood_boxes_per_colony,
      doseGrams: gramsAtDosePerColony(
        row.colonies_expected,
        planned.get(Number(row.yard_id))?.dosePerColonyGrams ?? colonyDose({ broodBoxesPerColony: row.brood_boxes_per_colony, boxType: row.box_type }, settings).dosePerColonyGrams,
      ),
      arriveAt,
      startAt,
      leaveAt: new Date(row.leave_at),
      arriveClock: zonedClockTime(arriveAt, settings.timeZone),
      startClock: zonedClockTime(startAt, settings.timeZone),
    };
  });
  const start = { label: run.start_label, lat: Number(run.start_lat), lng: Number(run.start_lng) };
  const end =
    run.end_lat != null && run.end_lng != null
      ? { label: run.end_label ?? run.start_label, lat: Number(run.end_lat), lng: Number(run.end_lng) }
      : start;
  return {
    runId: Number(run.id),
    crewName: run.crew_name,
    serviceDate: run.service_date,
    version: run.version,
    status: run.status,
    doseGramsPerBroodBox: settings.doseGramsPerBroodBox,
    productName: settings.productName,
    start,
    end,
    stops,
    totalGrams: doseGramsForRun(stops.map((s) => s.doseGrams)),
    generatedAt: now,
  };
}
