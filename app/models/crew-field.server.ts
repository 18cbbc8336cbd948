import type { Knex } from "knex";
import { BOX_TYPE_LABELS, doseAssumption, doseGramsForColonyOfType } from "~/domain/box-types";
import { doseRatesAboveLabel } from "~/domain/settings";
import type { FieldRun, FieldStop, FieldTally, SkipReason } from "~/components/crew/field-types";
import { formatClock } from "~/components/format";
import { treatedBeforeVisits } from "./season-applications.server";
import { loadBusinessSettings } from "./settings.server";

/** Everything the crew's phone needs for one run, in a few queries: stops, colonies with
 *  doses, tallies so far, photos, and the figures for doses and mite counts. */
export async function crewFieldRun(db: Knex, crewId: number | string, serviceDate: string): Promise<FieldRun | null> {
  const settings = await loadBusinessSettings(db);
  const run = await db("runs")
    .join("crews", "crews.id", "runs.crew_id")
    .where("runs.crew_id", crewId)
    .where("runs.service_date", serviceDate)
    .whereIn("runs.status", ["published", "in_progress", "done"])
    .first("runs.id", "runs.version", "crews.name as crewName", "runs.service_date as serviceDate", "runs.safety_checked_at", "runs.drive_meters", "runs.drive_seconds");
  if (!run) return null;
  const stops = await db("stops")
    .join("visits", "visits.id", "stops.visit_id")
    .join("courses", "courses.id", "visits.course_id")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .where("stops.run_id", run.id)
    .orderBy("stops.position")
    .select(
      "visits.id as visitId",
      "stops.position",
      "stops.arrive_at",
      "yards.id as yardId",
      "yards.name as yardName",
      "customers.name as customerName",
      "customers.phone as customerPhone",
      "yards.address",
      "yards.lat",
      "yards.lng",
      "yards.access_notes as accessNotes",
      "visits.round_number as roundNumber",
      "visits.course_id as courseId",
      "courses.rounds_planned as roundsPlanned",
      "visits.supers_confirmed_at",
      "visits.status",
      "visits.air_temp_c",
    );
  const yardIds = stops.map((s) => s.yardId);
  const visitIds = stops.map((s) => s.visitId);
  const [colonies, tallies, photos, applied, roundsAdded, nextRounds] = await Promise.all([
    db("colonies").whereIn("yard_id", yardIds).where({ active: true }).orderByRaw("length(label), label").select("id", "yard_id", "label", "brood_boxes", "box_type"),
    db("tallies").whereIn("visit_id", visitIds).select("visit_id", "colony_label", "outcome", "skip_reason", "skip_note", "mites", "bees_sampled", "wash_sample_ml", "bees_estimated", "notes", "brood_seen"),
    db("attachments").whereIn("yard_id", yardIds).orderBy("id").select("id", "yard_id"),
    // Treated tallies per colony in the run's calendar year, before today's visits: the cap counts them.
    treatedBeforeVisits(db, { yardIds, serviceDate: String(run.serviceDate), visitIds }),
    // Rounds added when a visit found brood in a course planned broodless (finishVisit audits it).
    db("audit_log")
      .where({ action: "course.rounds_added", entity_type: "course" })
      .whereIn("entity_id", stops.map((s) => String(s.courseId)))
      .select("after"),
    db("visits")
      .whereIn("course_id", stops.map((s) => s.courseId))
      .whereNot({ status: "cancelled" })
      .select("course_id", "round_number", "service_date"),
  ]);
  const addedAt = new Map<number, number>();
  for (const row of roundsAdded) {
    const after = row.after as { visitId?: unknown; roundsAdded?: unknown };
    addedAt.set(Number(after.visitId), Number(after.roundsAdded ?? 0));
  }
  const fieldStops: FieldStop[] = stops.map((s) => ({
    visitId: s.visitId,
    position: s.position,
    yardName: s.yardName,
    customerName: s.customerName,
    customerPhone: s.customerPhone,
    address: s.address,
    lat: Number(s.lat),
    lng: Number(s.lng),
    accessNotes: s.accessNotes,
    photoIds: photos.filter((p) => p.yard_id === s.yardId).map((p) => p.id),
    arrive: formatClock(s.arrive_at, settings.timeZone),
    roundNumber: s.roundNumber,
    roundsPlanned: s.roundsPlanned,
    colonies: colonies
      .filter((c) => c.yard_id === s.yardId)
      .map((c) => ({
        label: c.label,
        broodBoxes: c.brood_boxes,
        doseGrams: doseGramsForColonyOfType(c.brood_boxes, c.box_type, settings),
        boxType: c.box_type,
        boxTypeLabel: BOX_TYPE_LABELS[c.box_type],
        doseAssumption: doseAssumption({ broodBoxes: c.brood_boxes, boxType: c.box_type, rates: settings, loadGrams: settings.vaporizerLoadGrams }),
        applicationsBefore: applied.get(Number(c.id)) ?? 0,
        applicationCap: settings.maxApplicationsPerColonyPerSeason,
      })),
    airTempC: s.air_temp_c === null || s.air_temp_c === undefined ? null : Number(s.air_temp_c),
    roundsAdded: addedAt.get(Number(s.visitId)) ?? 0,
    nextRoundDate: nextRounds.find((v) => Number(v.course_id) === Number(s.courseId) && v.round_number === s.roundNumber + 1)?.service_date ?? null,
    supersConfirmed: s.supers_confirmed_at !== null,
    status: s.status,
    tallies: Object.fromEntries(
      tallies
        .filter((t) => t.visit_id === s.visitId)
        .map((t): [string, FieldTally] => [
          t.colony_label,
          { colonyLabel: t.colony_label, outcome: t.outcome, skipReason: t.skip_reason as SkipReason | null, skipNote: t.skip_note, mites: t.mites, beesSampled: t.bees_estimated ? null : t.bees_sampled, estimatedBees: t.bees_estimated ? t.bees_sampled : null, sampleMl: t.wash_sample_ml === null ? null : Number(t.wash_sample_ml), notes: t.notes, broodSeen: t.brood_seen ?? null },
        ]),
    ),
  }));
  return {
    runId: run.id,
    version: run.version,
    crewName: run.crewName,
    serviceDate: run.serviceDate,
    safetyChecked: run.safety_checked_at !== null,
    driveMeters: run.drive_meters,
    driveSeconds: run.drive_seconds,
    stops: fieldStops,
    settings: {
      unitSystem: settings.unitSystem,
      timeZone: settings.timeZone,
      sublimationSeconds: settings.sublimationSeconds,
      entranceClosedMinutes: settings.entranceClosedMinutes,
      doseGramsPerBroodBox: settings.doseGramsPerBroodBox,
      blockMinC: settings.blockMinC,
      blockMaxC: settings.blockMaxC,
      miteThresholds: settings.miteThresholds,
      beesPer100Ml: settings.beesPer100Ml,
      doseGramsPerMediumBox: settings.doseGramsPerMediumBox,
      doseGramsPerNucBox: settings.doseGramsPerNucBox,
      airTempMinC: settings.airTempMinC,
      airTempMaxC: settings.airTempMaxC,
    },
    doseAboveLabel: doseRatesAboveLabel(settings),
    loadedAt: new Date().toISOString(),
  };
}
