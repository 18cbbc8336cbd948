import type { Knex } from "knex";
import { formatServiceDate } from "~/components/format";
import { addCalendarDays, calendarDaysBetween, isIsoDate } from "~/domain/courses";
import type { BoxType } from "~/domain/box-types";
import { doseGramsForRun, gramsToCentigrams } from "~/domain/dose";
import { windowForPreference } from "~/domain/time-windows";
import { planDay, recomputeTimes, type CrewRun, type PlanCrew, type PlanVisit, type TimeWindow, type TravelMatrix } from "~/domain/planner";
import { serviceMinutesForYard } from "~/domain/service-time";
import type { BusinessSettings } from "~/domain/settings";
import type { LatLng } from "~/domain/travel";
import { gramsAtDosePerColony, type PlannedColonyDose } from "~/domain/yard-colony-doses";
import { parseClockTime } from "~/domain/units";
import { minutesAfterZonedMidnight, zonedClockTime, zonedDateTimeToInstant } from "~/domain/zoned-time";
import { runPublishedEmail } from "~/emails/run";
import { dateInZone } from "~/services/clock.server";
import { serverEnv } from "~/services/env.server";
import { requestEmailDelivery } from "~/services/jobs.server";
import { travelMatrixWithFallback, type TravelOptions, type TravelProviderName } from "~/services/travel.server";
import { crewIdsWorkingOn, roomBetween } from "./capacity.server";
import { queueEmail } from "./emails.server";
import { loadBusinessSettings } from "./settings.server";
import type { RunRow, TimePreference } from "./tables";
import { rescheduleVisit, VisitChangeRefused } from "./visit-changes.server";
import { plannedYardDoses } from "./yard-doses.server";

// The dispatcher's day: planning a service day's runs with the route planner
// (app/domain/planner), moving and locking stops, publishing runs to crews, and moving
// deferred visits to the next day with room.
//
// Times: the planner counts minutes from local midnight of the service day; stops store
// instants (timestamptz) made with the business's time zone (app/domain/zoned-time.ts).
//
// Service time: the planner takes one service time per visit, while crews may carry
// different numbers of vaporizers. A plan is made with the service times of the crew with
// the fewest vaporizers (the longest), so it fits whichever crew serves a visit; each run
// is then timed with its own crew's vaporizers, which can only make every stop earlier —
// no window or working day is broken by the re-timing.
//
// Runs: planning replaces the day's draft runs. A published run is kept as it is unless
// the dispatcher asks to re-plan published runs; then it becomes a draft again with its
// version raised by one, and the summary says it must be published again. Runs under way
// or done are never changed. Every change takes a per-day advisory lock, so two
// dispatchers re-planning the same day queue up instead of interleaving.
//
// Crews: the day is planned with the crews working that day — active, on one of their
// weekdays, their own day not closed, the whole day not closed — the same crews the booking
// capacity counts (capacity.server.ts crewIdsWorkingOn). A crew's daily limits (colonies,
// grams) are hard rules: the planner never exceeds them, and a stop is never moved onto a
// crew's run past them.

/** A change the dispatcher asked for that cannot be made. */
export class DayPlanRefused extends Error {
  constructor(
    message: string,
    readonly code: "bad_date" | "no_visit" | "no_crew" | "run_under_way" | "no_run" | "no_stops" | "no_stop" | "over_limit",
  ) {
    super(message);
    this.name = "DayPlanRefused";
  }
}

const OPEN_STATUSES = ["scheduled", "deferred"] as const;
/** Runs that planning never changes. */
const UNDER_WAY = ["in_progress", "done"] as const;
/** Run statuses a crew sees. */
export const CREW_VISIBLE_RUN_STATUSES = ["published", "in_progress", "done"] as const;

const EPSILON_MINUTES = 1e-6;

export type LabelledPoint = LatLng & { label: string };

export type DayCrew = {
  crewId: number;
  name: string;
  start: LabelledPoint;
  end: LabelledPoint;
  /** "08:00" and minutes after midnight. */
  workStart: string;
  workEnd: string;
  workStartMin: number;
  workEndMin: number;
  vaporizers: number;
  active: boolean;
  /** The crew's daily limits (null: none). */
  maxColoniesPerDay: number | null;
  maxDoseGramsPerDay: number | null;
  members: { userId: number; name: string; email: string }[];
};

export type DayStop = {
  stopId: number;
  runId: number;
  crewId: number;
  /** 0-based order on the run. */
  position: number;
  locked: boolean;
  arriveAt: Date;
  startAt: Date;
  leaveAt: Date;
  driveSecondsFromPrevious: number;
  driveMetersFromPrevious: number;
};

export type DayVisit = {
  visitId: number;
  status: "scheduled" | "deferred" | "in_progress" | "done";
  deferReason: string | null;
  roundNumber: number;
  yardId: number;
  yardName: string;
  customerName: string;
  address: string | null;
  lat: number;
  lng: number;
  accessNotes: string;
  colonies: number;
  broodBoxesPerColony: number;
  boxType: BoxType;
  /**
   * Vaporizer loads per colony (≥ 1): the most any of the yard's colonies takes, as the crew
   * last found them (the yard's boxes when it has no colony rows); the time at the yard grows with them.
   */
  loadsPerColony: number;
  /** Grams of oxalic acid dihydrate for the visit: colonies × the yard's planned dose per colony (yard-doses.server.ts). */
  grams: number;
  timePreference: TimePreference;
  /** Minutes after midnight: service starts at or after startMin and ends by endMin. */
  window: TimeWindow;
  /** "08:00–12:00". */
  windowLabel: string;
  /** When the booking was made (ISO); earlier bookings win ties. */
  bookedAt: string;
  stop: DayStop | null;
};

export type StopIssue = {
  kind: "window_missed" | "work_day_overrun";
  crewId: number;
  /** The stop concerned; null for an overrun of the working day. */
  visitId: number | null;
  /** By how many minutes the window or the working day is exceeded. */
  minutes: number;
  message: string;
};

export type DayRunStop = DayStop & {
  visitId: number;
  visitStatus: string;
  yardName: string;
  customerName: string;
  address: string | null;
  lat: number;
  lng: number;
  accessNotes: string;
  colonies: number;
  grams: number;
  window: TimeWindow;
  windowLabel: string;
  /** Clock times in the business's time zone, e.g. "09:40". */
  arrive: string;
  start: string;
  leave: string;
};

export type DayRun = {
  runId: number;
  crewId: number;
  crewName: string;
  status: RunRow["status"];
  version: number;
  publishedAt: Date | null;
  driveSeconds: number;
  driveMeters: number;
  colonies: number;
  grams: number;
  /** Leaving the start point and back at the end point (null without stops). */
  departAt: Date | null;
  returnAt: Date | null;
  start: LabelledPoint;
  end: LabelledPoint;
  stops: DayRunStop[];
  /** Broken windows and an overrun working day, from the stored times. */
  issues: StopIssue[];
};

export type DayPlanningData = {
  date: string;
  timeZone: string;
  crews: DayCrew[];
  /** The day's visits that are still open (scheduled or deferred), planned or not. */
  visits: DayVisit[];
  runs: DayRun[];
  /** Open visits with no stop: deferred ones with their reasons, and new ones not yet planned. */
  unplanned: DayVisit[];
};

// ---------------------------------------------------------------------------------------
// Loading a day

type CrewQueryRow = {
  id: number;
  name: string;
  start_label: string;
  start_lat: number;
  start_lng: number;
  end_label: string | null;
  end_lat: number | null;
  end_lng: number | null;
  work_start: string;
  work_end: string;
  vaporizers: number;
  active: boolean;
  max_colonies_per_day: number | null;
  max_dose_grams_per_day: number | null;
};

type VisitQueryRow = {
  visit_id: number;
  status: DayVisit["status"];
  defer_reason: string | null;
  round_number: number;
  time_preference: TimePreference;
  colonies_expected: number;
  booked_at: Date;
  yard_id: number;
  yard_name: string;
  lat: number;
  lng: number;
  address: string | null;
  access_notes: string;
  brood_boxes_per_colony: number;
  box_type: BoxType;
  customer_name: string;
  stop_id: number | null;
  run_id: number | null;
  run_crew_id: number | null;
  position: number | null;
  locked: boolean | null;
  arrive_at: Date | null;
  start_at: Date | null;
  leave_at: Date | null;
  drive_seconds_from_previous: number | null;
  drive_meters_from_previous: number | null;
};

type RunQueryRow = RunRow & { crew_name: string };

function clock(minutes: number): string {
  const whole = Math.round(minutes);
  return `${String(Math.floor(whole / 60)).padStart(2, "0")}:${String(whole % 60).padStart(2, "0")}`;
}

function clockOf(time: string): number {
  return parseClockTime(String(time).slice(0, 5));
}

function toDayCrew(row: CrewQueryRow, members: DayCrew["members"]): DayCrew {
  const start = { label: row.start_label, lat: Number(row.start_lat), lng: Number(row.start_lng) };
  const end =
    row.end_lat != null && row.end_lng != null
      ? { label: row.end_label ?? row.start_label, lat: Number(row.end_lat), lng: Number(row.end_lng) }
      : start;
  const workStartMin = clockOf(row.work_start);
  const workEndMin = clockOf(row.work_end);
  return {
    crewId: Number(row.id),
    name: row.name,
    start,
    end,
    workStart: clock(workStartMin),
    workEnd: clock(workEndMin),
    workStartMin,
    workEndMin,
    vaporizers: row.vaporizers,
    active: row.active,
    maxColoniesPerDay: row.max_colonies_per_day == null ? null : Number(row.max_colonies_per_day),
    maxDoseGramsPerDay: row.max_dose_grams_per_day == null ? null : Number(row.max_dose_grams_per_day),
    members,
  };
}

export { windowForPreference };

type LoadedDay = {
  date: string;
  settings: BusinessSettings;
  /** Active crews, and the crews of the day's runs. */
  crews: Map<number, DayCrew>;
  /** The crews working that day (see the note at the top), by name. */
  activeCrews: DayCrew[];
  visits: DayVisit[];
  runs: RunQueryRow[];
  /** Stops of the day's runs (any visit status), by run, in order. */
  stopsByRun: Map<number, (DayStop & { visitId: number })[]>;
  /** Every visit with a stop on the day's runs (open or not). */
  visitsById: Map<number, DayVisit>;
};

async function loadDay(db: Knex, date: string, settings: BusinessSettings, lock: boolean): Promise<LoadedDay> {
  const runRows = (await db("runs")
    .join("crews", "crews.id", "runs.crew_id")
    .where("runs.service_date", date)
    .orderBy("crews.name")
    .select("runs.*", "crews.name as crew_name")) as RunQueryRow[];
  const crewIds = new Set(runRows.map((r) => Number(r.crew_id)));
  const crewRows = (await db("crews")
    .where((q) => q.where("active", true).orWhereIn("id", [...crewIds]))
    .orderBy("name")
    .select("*")) as CrewQueryRow[];
  const memberRows = (await db("crew_members")
    .join("users", "users.id", "crew_members.user_id")
    .whereIn(
      "crew_members.crew_id",
      crewRows.map((c) => c.id),
    )
    .whereNull("users.disabled_at")
    .orderBy("users.name")
    .select("crew_members.crew_id", "users.id", "users.name", "users.email")) as { crew_id: number; id: number; name: string; email: string }[];
  const crews = new Map<number, DayCrew>();
  for (const row of crewRows) {
    const members = memberRows.filter((m) => Number(m.crew_id) === Number(row.id)).map((m) => ({ userId: Number(m.id), name: m.name, email: m.email }));
    crews.set(Number(row.id), toDayCrew(row, members));
  }
  const working = new Set(await crewIdsWorkingOn(db, date));
  const activeCrews = [...crews.values()].filter((c) => c.active && working.has(c.crewId));

  const runIds = runRows.map((r) => Number(r.id));
  let query = db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .leftJoin("courses", "courses.id", "visits.course_id")
    .leftJoin("bookings", "bookings.id", "courses.booking_id")
    .leftJoin("stops", "stops.visit_id", "visits.id")
    .leftJoin("runs", "runs.id", "stops.run_id")
    .where((q) => {
      q.where((open) => open.where("visits.service_date", date).whereIn("visits.status", OPEN_STATUSES));
      if (runIds.length > 0) q.orWhereIn("stops.run_id", runIds);
    })
    .orderBy("visits.id")
    .select(
      "visits.id as visit_id",
      "visits.status",
      "visits.defer_reason",
      "visits.round_number",
      "visits.time_preference",
      "visits.colonies_expected",
      db.raw("coalesce(bookings.created_at, courses.created_at, visits.created_at) as booked_at"),
      "yards.id as yard_id",
      "yards.name as yard_name",
      "yards.lat",
      "yards.lng",
      "yards.address",
      "yards.access_notes",
      "yards.brood_boxes_per_colony",
      "yards.box_type",
      "customers.name as customer_name",
      "stops.id as stop_id",
      "stops.run_id",
      "runs.crew_id as run_crew_id",
      "stops.position",
      "stops.locked",
      "stops.arrive_at",
      "stops.start_at",
      "stops.leave_at",
      "stops.drive_seconds_from_previous",
      "stops.drive_meters_from_previous",
    );
  if (lock) query = query.forUpdate("visits");
  const visitRows = (await query) as unknown as VisitQueryRow[];

  const visitsById = new Map<number, DayVisit>();
  const stopsByRun = new Map<number, (DayStop & { visitId: number })[]>();
  const windowCrews = activeCrews.length > 0 ? activeCrews : [...crews.values()];
  // Each yard's dose from its colonies as the crew last found them, in one query for the day.
  const doses = await plannedYardDoses(db, settings, visitRows.map((r) => Number(r.yard_id)));
  for (const row of visitRows) {
    const window = windowForPreference(row.time_preference, windowCrews);
    const dose = plannedDoseOf(doses, row.yard_id);
    const stop: DayStop | null =
      row.stop_id != null && runIds.includes(Number(row.run_id))
        ? {
            stopId: Number(row.stop_id),
            runId: Number(row.run_id),
            crewId: Number(row.run_crew_id),
            position: Number(row.position),
            locked: Boolean(row.locked),
            arriveAt: new Date(row.arrive_at!),
            startAt: new Date(row.start_at!),
            leaveAt: new Date(row.leave_at!),
            driveSecondsFromPrevious: Number(row.drive_seconds_from_previous ?? 0),
            driveMetersFromPrevious: Number(row.drive_meters_from_previous ?? 0),
          }
        : null;
    const visit: DayVisit = {
      visitId: Number(row.visit_id),
      status: row.status,
      deferReason: row.defer_reason,
      roundNumber: row.round_number,
      yardId: Number(row.yard_id),
      yardName: row.yard_name,
      customerName: row.customer_name,
      address: row.address,
      lat: Number(row.lat),
      lng: Number(row.lng),
      accessNotes: row.access_notes,
      colonies: row.colonies_expected,
      broodBoxesPerColony: row.brood_boxes_per_colony,
      boxType: row.box_type,
      loadsPerColony: dose.loadsPerColony,
      grams: gramsAtDosePerColony(row.colonies_expected, dose.dosePerColonyGrams),
      timePreference: row.time_preference,
      window,
      windowLabel: `${clock(window.startMin)}–${clock(window.endMin)}`,
      bookedAt: new Date(row.booked_at).toISOString(),
      stop,
    };
    visitsById.set(visit.visitId, visit);
    if (stop) {
      const list = stopsByRun.get(stop.runId) ?? [];
      list.push({ ...stop, visitId: visit.visitId });
      stopsByRun.set(stop.runId, list);
    }
  }
  for (const list of stopsByRun.values()) list.sort((a, b) => a.position - b.position || a.stopId - b.stopId);
  const visits = [...visitsById.values()].filter((v) => (OPEN_STATUSES as readonly string[]).includes(v.status));
  return { date, settings, crews, activeCrews, visits, runs: runRows, stopsByRun, visitsById };
}

function storedRunIssues(crew: DayCrew | undefined, run: RunQueryRow, stops: DayRunStop[], returnAt: Date | null, date: string, timeZone: string): StopIssue[] {
  const issues: StopIssue[] = [];
  const crewId = Number(run.crew_id);
  for (const stop of stops) {
    const leave = minutesAfterZonedMidnight(stop.leaveAt, date, timeZone);
    const late = leave - stop.window.endMin;
    if (late > 1 / 60) {
      issues.push({
        kind: "window_missed",
        crewId,
        visitId: stop.visitId,
        minutes: late,
        message: `${stop.yardName} of ${stop.customerName} would finish at ${clock(leave)}, ${Math.max(1, Math.round(late))} min after its window closes at ${clock(stop.window.endMin)}.`,
      });
    }
  }
  if (crew && returnAt) {
    const back = minutesAfterZonedMidnight(returnAt, date, timeZone);
    const over = back - crew.workEndMin;
    if (over > 1 / 60) {
      issues.push({
        kind: "work_day_overrun",
        crewId,
        visitId: null,
        minutes: over,
        message: `${crew.name} would be back at ${clock(back)}, ${Math.max(1, Math.round(over))} min after the working day ends at ${crew.workEnd}.`,
      });
    }
  }
  return issues;
}

function buildDayRuns(day: LoadedDay): DayRun[] {
  const timeZone = day.settings.timeZone;
  return day.runs.map((run) => {
    const runId = Number(run.id);
    const crew = day.crews.get(Number(run.crew_id));
    const stops: DayRunStop[] = (day.stopsByRun.get(runId) ?? []).map((stop) => {
      const visit = day.visitsById.get(stop.visitId)!;
      return {
        ...stop,
        visitStatus: visit.status,
        yardName: visit.yardName,
        customerName: visit.customerName,
        address: visit.address,
        lat: visit.lat,
        lng: visit.lng,
        accessNotes: visit.accessNotes,
        colonies: visit.colonies,
        grams: visit.grams,
        window: visit.window,
        windowLabel: visit.windowLabel,
        arrive: zonedClockTime(stop.arriveAt, timeZone),
        start: zonedClockTime(stop.startAt, timeZone),
        leave: zonedClockTime(stop.leaveAt, timeZone),
      };
    });
    const first = stops[0];
    const last = stops.at(-1);
    const legsIn = stops.reduce((sum, s) => sum + s.driveSecondsFromPrevious, 0);
    const departAt = first ? new Date(first.arriveAt.getTime() - first.driveSecondsFromPrevious * 1000) : null;
    const returnAt = last ? new Date(last.leaveAt.getTime() + Math.max(0, run.drive_seconds - legsIn) * 1000) : null;
    const fallbackPoint = { label: "", lat: 0, lng: 0 };
    return {
      runId,
      crewId: Number(run.crew_id),
      crewName: run.crew_name,
      status: run.status,
      version: run.version,
      publishedAt: run.published_at,
      driveSeconds: run.drive_seconds,
      driveMeters: run.drive_meters,
      colonies: stops.reduce((sum, s) => sum + s.colonies, 0),
      grams: doseGramsForRun(stops.map((s) => s.grams)),
      departAt,
      returnAt,
      start: crew?.start ?? fallbackPoint,
      end: crew?.end ?? fallbackPoint,
      stops,
      issues: storedRunIssues(crew, run, stops, returnAt, day.date, timeZone),
    };
  });
}

function assertDate(date: string): void {
  if (!isIsoDate(date)) throw new DayPlanRefused("Choose a service day (YYYY-MM-DD).", "bad_date");
}

/** Everything the day screen shows: crews, open visits, runs with their stops and problems. */
export async function dayPlanningData(db: Knex, date: string): Promise<DayPlanningData> {
  assertDate(date);
  const settings = await loadBusinessSettings(db);
  const day = await loadDay(db, date, settings, false);
  return {
    date,
    timeZone: settings.timeZone,
    crews: day.activeCrews,
    visits: day.visits,
    runs: buildDayRuns(day),
    unplanned: day.visits.filter((v) => v.stop === null),
  };
}

// ---------------------------------------------------------------------------------------
// Planning

/** A run under way or done; one whose crew has started a visit counts too, whatever its status. */
function runUnderWay(day: LoadedDay, run: RunQueryRow): boolean {
  if ((UNDER_WAY as readonly string[]).includes(run.status)) return true;
  return (day.stopsByRun.get(Number(run.id)) ?? []).some(
    (s) => !(OPEN_STATUSES as readonly string[]).includes(day.visitsById.get(s.visitId)?.status ?? ""),
  );
}

/** Takes the day's planning lock for the transaction: planning, moving stops, publishing and working-day changes queue on it. */
export async function lockServiceDay(trx: Knex.Transaction, date: string): Promise<void> {
  await trx.raw("select pg_advisory_xact_lock(hashtext(?))", [`varroute:service-day:${date}`]);
}

/** Matrix points for crews and visits, shared by equal coordinates. */
class PointIndex {
  readonly points: LatLng[] = [];
  private readonly byKey = new Map<string, number>();
  add(point: LatLng): number {
    const key = `${point.lat.toFixed(6)},${point.lng.toFixed(6)}`;
    let index = this.byKey.get(key);
    if (index === undefined) {
      index = this.points.length;
      this.points.push({ lat: point.lat, lng: point.lng });
      this.byKey.set(key, index);
    }
    return index;
  }
}

/** A yard's planned dose (yard-doses.server.ts always answers for a yard it was asked about). */
function plannedDoseOf(doses: ReadonlyMap<number, PlannedColonyDose>, yardId: number | string): PlannedColonyDose {
  const dose = doses.get(Number(yardId));
  if (!dose) throw new Error(`no planned dose for yard ${yardId}`);
  return dose;
}

function serviceMinutes(settings: BusinessSettings, colonies: number, vaporizers: number, loadsPerColony: number): number {
  return serviceMinutesForYard({
    colonies,
    vaporizers,
    loadsPerColony,
    setupMinutes: settings.setupMinutes,
    sublimationSeconds: settings.sublimationSeconds,
    moveBetweenHivesMinutes: settings.moveBetweenHivesMinutes,
    blockReheatSeconds: settings.blockReheatSeconds,
    entranceClosedMinutes: settings.entranceClosedMinutes,
  });
}

function planCrew(crew: DayCrew, points: PointIndex): PlanCrew {
  return {
    id: String(crew.crewId),
    startIndex: points.add(crew.start),
    endIndex: points.add(crew.end),
    workStartMin: crew.workStartMin,
    workEndMin: crew.workEndMin,
    maxColonies: crew.maxColoniesPerDay,
    maxDoseGrams: crew.maxDoseGramsPerDay,
  };
}

function planVisit(visit: DayVisit, settings: BusinessSettings, vaporizers: number, points: PointIndex, locked?: PlanVisit["locked"]): PlanVisit {
  return {
    id: String(visit.visitId),
    pointIndex: points.add(visit),
    colonies: visit.colonies,
    serviceMinutes: serviceMinutes(settings, visit.colonies, vaporizers, visit.loadsPerColony),
    window: visit.window,
    bookedAt: visit.bookedAt,
    doseGrams: visit.grams,
    ...(locked ? { locked } : {}),
  };
}

/** The planner's messages name visits and crews by id; the dispatcher reads yards and crew names. */
function humanise(message: string, visits: Map<number, DayVisit>, crews: Map<number, DayCrew>): string {
  return message.replace(/\b(visit|crew) (\d+)\b/gi, (whole, kind: string, id: string) => {
    if (kind.toLowerCase() === "visit") {
      const visit = visits.get(Number(id));
      return visit ? `${visit.yardName} of ${visit.customerName}` : whole;
    }
    return crews.get(Number(id))?.name ?? whole;
  });
}

type TimedStop = {
  visitId: number;
  arriveAt: Date;
  startAt: Date;
  leaveAt: Date;
  driveSeconds: number;
  driveMeters: number;
  locked: boolean;
};

function timedStops(run: CrewRun, date: string, timeZone: string, locked: (visitId: number) => boolean): TimedStop[] {
  return run.stops.map((stop) => {
    const visitId = Number(stop.visitId);
    return {
      visitId,
      arriveAt: zonedDateTimeToInstant(date, stop.arriveMin, timeZone),
      startAt: zonedDateTimeToInstant(date, stop.startMin, timeZone),
      leaveAt: zonedDateTimeToInstant(date, stop.leaveMin, timeZone),
      driveSeconds: Math.round(stop.driveSecondsIn),
      driveMeters: Math.round(stop.driveMetresIn),
      locked: locked(visitId),
    };
  });
}

/** Why these visits break the crew's daily limits (a sentence), or null when they keep them. */
function crewLimitProblem(crew: DayCrew, visits: readonly DayVisit[]): string | null {
  const colonies = visits.reduce((sum, v) => sum + v.colonies, 0);
  if (crew.maxColoniesPerDay != null && colonies > crew.maxColoniesPerDay) {
    return `${crew.name} treats at most ${crew.maxColoniesPerDay} colonies a day; with this stop the run would have ${colonies}. Move another stop off the run first, or choose another crew.`;
  }
  const grams = doseGramsForRun(visits.map((v) => v.grams));
  if (crew.maxDoseGramsPerDay != null && gramsToCentigrams(grams) > gramsToCentigrams(crew.maxDoseGramsPerDay)) {
    return `${crew.name} applies at most ${crew.maxDoseGramsPerDay} g a day; with this stop the run would need ${grams} g. Move another stop off the run first, or choose another crew.`;
  }
  return null;
}

/** A crew's run re-timed in a given order with its own vaporizers (nothing re-planned). */
function timeCrewRun(
  crew: DayCrew,
  order: readonly number[],
  visitsById: Map<number, DayVisit>,
  settings: BusinessSettings,
  points: PointIndex,
  matrix: TravelMatrix,
) {
  const planCrewRow = planCrew(crew, points);
  const visits = order.map((id) => planVisit(visitsById.get(id)!, settings, crew.vaporizers, points));
  return recomputeTimes(planCrewRow, order.map(String), visits, matrix);
}

async function writeStops(trx: Knex.Transaction, runId: number, stops: readonly TimedStop[]): Promise<void> {
  for (const [position, stop] of stops.entries()) {
    const row = {
      run_id: runId,
      position,
      arrive_at: stop.arriveAt,
      start_at: stop.startAt,
      leave_at: stop.leaveAt,
      drive_seconds_from_previous: stop.driveSeconds,
      drive_meters_from_previous: stop.driveMeters,
      locked: stop.locked,
      updated_at: trx.fn.now() as unknown as Date,
    };
    await trx("stops")
      .insert({ ...row, visit_id: stop.visitId })
      .onConflict("visit_id")
      .merge(row);
  }
}

/** A run for a crew and day, as a draft: created if missing; a published one is reopened (version + 1). */
async function draftRunFor(
  trx: Knex.Transaction,
  crewId: number,
  date: string,
): Promise<{ runId: number; reopened: boolean; version: number; created: boolean; before: RunRow | null }> {
  const existing = await trx("runs").where({ crew_id: crewId, service_date: date }).forUpdate().first();
  if (!existing) {
    const [row] = await trx("runs").insert({ crew_id: crewId, service_date: date, status: "draft", version: 1 }).returning(["id", "version"]);
    return { runId: Number(row.id), reopened: false, version: row.version, created: true, before: null };
  }
  if ((UNDER_WAY as readonly string[]).includes(existing.status)) {
    throw new DayPlanRefused("That crew's run is under way or done; it can no longer be changed.", "run_under_way");
  }
  if (existing.status === "published") {
    await trx("runs")
      .where({ id: existing.id })
      .update({ status: "draft", version: existing.version + 1, updated_at: trx.fn.now() as unknown as Date });
    return { runId: Number(existing.id), reopened: true, version: existing.version + 1, created: false, before: existing };
  }
  return { runId: Number(existing.id), reopened: false, version: existing.version, created: false, before: existing };
}

function reopenedMessage(crewName: string, version: number): string {
  return `${crewName}'s run was published; it is a draft again (version ${version}). Publish it again to send the changes to the crew.`;
}

export type PlannedCrewSummary = {
  crewId: number;
  crewName: string;
  runId: number | null;
  status: RunRow["status"] | null;
  version: number | null;
  /** True when a published run became a draft again. */
  reopened: boolean;
  stops: number;
  colonies: number;
  grams: number;
  driveSeconds: number;
  driveMeters: number;
  departAt: Date | null;
  /** Back at the end point. */
  finishAt: Date | null;
  /** "16:05" in the business's time zone, or null for an idle crew. */
  finishTime: string | null;
};

export type DeferredVisitSummary = {
  visitId: number;
  yardName: string;
  customerName: string;
  colonies: number;
  reason: "does_not_fit_day" | "outside_every_window" | "no_crew";
  message: string;
};

export type DayPlanSummary = {
  date: string;
  provider: TravelProviderName;
  /** Why drive times are estimated although a routing engine is configured; else null. */
  notice: string | null;
  method: "exact" | "heuristic" | null;
  crews: PlannedCrewSummary[];
  deferred: DeferredVisitSummary[];
  /** Runs left as they were: published (not asked to re-plan), under way or done. */
  keptRuns: { runId: number; crewId: number; crewName: string; status: RunRow["status"] }[];
  /** Things the dispatcher should know, e.g. runs that must be published again. */
  messages: string[];
  colonies: number;
  driveSeconds: number;
  driveMeters: number;
};

/**
 * Plans a service day: which open visits each active crew serves, in what order and when.
 * Replaces the day's draft runs and their stops in one transaction, marks the visits that
 * do not fit as deferred (with the reason) and the others as scheduled.
 */
export async function planServiceDay(
  db: Knex,
  input: {
    date: string;
    actorUserId: number | string;
    /** Keep locked stops with their crew, in their order (else locks are ignored and cleared). */
    keepLocked: boolean;
    /** Also re-plan published runs (they become drafts again, version + 1). */
    replanPublished?: boolean;
    seed?: number;
    travel?: TravelOptions;
  },
): Promise<DayPlanSummary> {
  assertDate(input.date);
  const settings = await loadBusinessSettings(db);
  const { date } = input;
  const timeZone = settings.timeZone;
  const actor = Number(input.actorUserId);

  return db.transaction(async (trx) => {
    await lockServiceDay(trx, date);
    const day = await loadDay(trx, date, settings, true);

    const kept = day.runs.filter((run) => runUnderWay(day, run) || (run.status === "published" && !input.replanPublished));
    const keptRunIds = new Set(kept.map((r) => Number(r.id)));
    const keptCrewIds = new Set(kept.map((r) => Number(r.crew_id)));
    const crews = day.activeCrews.filter((c) => !keptCrewIds.has(c.crewId));
    const plannable = day.visits.filter((v) => !(v.stop && keptRunIds.has(v.stop.runId)));
    const plannableById = new Map(plannable.map((v) => [v.visitId, v]));

    const points = new PointIndex();
    const planCrews = crews.map((crew) => planCrew(crew, points));
    const vaporizers = crews.length > 0 ? Math.min(...crews.map((c) => c.vaporizers)) : settings.vaporizersPerCrew;
    const lockOf = (visit: DayVisit): PlanVisit["locked"] =>
      input.keepLocked && visit.stop?.locked ? { crewId: String(visit.stop.crewId), position: visit.stop.position } : undefined;
    const planVisits = plannable.map((visit) => planVisit(visit, settings, vaporizers, points, lockOf(visit)));
    const travel = await travelMatrixWithFallback(points.points, settings, input.travel);
    const plan = planDay({ visits: planVisits, crews: planCrews, matrix: travel.matrix, options: { seed: input.seed ?? 1 } });

    const keepsLock = (visitId: number) => Boolean(input.keepLocked && plannableById.get(visitId)?.stop?.locked);
    const messages: string[] = [];
    if (travel.notice) messages.push(travel.notice);

    // Take every stop off the runs being re-planned; delete draft runs no crew keeps.
    const replaced = day.runs.filter((run) => !keptRunIds.has(Number(run.id)));
    if (replaced.length > 0) {
      await trx("stops").whereIn("run_id", replaced.map((r) => Number(r.id))).delete();
    }

    const crewSummaries: PlannedCrewSummary[] = [];
    const touchedRunIds = new Set<number>();
    for (const crew of crews) {
      const crewPlan = plan.runs.find((r) => r.crewId === String(crew.crewId));
      const order = (crewPlan?.stops ?? []).map((s) => Number(s.visitId));
      const timed = order.length > 0 ? timeCrewRun(crew, order, plannableById, settings, points, travel.matrix) : null;
      if (timed && !timed.feasible) {
        // Cannot happen (see the note on service time above); say so rather than hide it.
        for (const issue of timed.issues) messages.push(humanise(issue.message, day.visitsById, day.crews));
      }
      const existing = day.runs.find((r) => Number(r.crew_id) === crew.crewId) ?? null;
      let runId: number | null = existing ? Number(existing.id) : null;
      let status: RunRow["status"] | null = existing?.status ?? null;
      let version: number | null = existing?.version ?? null;
      let reopened = false;
      if (timed && order.length > 0) {
        const draft = await draftRunFor(trx, crew.crewId, date);
        runId = draft.runId;
        status = "draft";
        version = draft.version;
        reopened = draft.reopened;
        await writeStops(trx, draft.runId, timedStops(timed, date, timeZone, keepsLock));
        await trx("runs")
          .where({ id: draft.runId })
          .update({ drive_seconds: Math.round(timed.driveSeconds), drive_meters: Math.round(timed.driveMetres), updated_at: trx.fn.now() as unknown as Date });
        await trx("audit_log").insert({
          actor_user_id: actor,
          action: "run.plan",
          entity_type: "run",
          entity_id: String(draft.runId),
          before: draft.before ? JSON.stringify({ status: draft.before.status, version: draft.before.version, stops: (day.stopsByRun.get(draft.runId) ?? []).map((s) => s.visitId) }) : null,
          after: JSON.stringify({ status: "draft", version: draft.version, stops: order }),
        });
        touchedRunIds.add(draft.runId);
      }
      if (reopened) messages.push(reopenedMessage(crew.name, version!));
      const grams = doseGramsForRun(order.map((id) => plannableById.get(id)!.grams));
      const finishAt = timed && order.length > 0 ? zonedDateTimeToInstant(date, timed.returnMin, timeZone) : null;
      crewSummaries.push({
        crewId: crew.crewId,
        crewName: crew.name,
        runId: timed && order.length > 0 ? runId : null,
        status: timed && order.length > 0 ? status : null,
        version: timed && order.length > 0 ? version : null,
        reopened,
        stops: order.length,
        colonies: timed?.colonies ?? 0,
        grams,
        driveSeconds: timed ? Math.round(timed.driveSeconds) : 0,
        driveMeters: timed ? Math.round(timed.driveMetres) : 0,
        departAt: timed && order.length > 0 ? zonedDateTimeToInstant(date, timed.departMin, timeZone) : null,
        finishAt,
        finishTime: finishAt ? zonedClockTime(finishAt, timeZone) : null,
      });
    }

    // Runs re-planned to no stops: a draft goes; a published one stays, empty, as a draft.
    for (const run of replaced) {
      const runId = Number(run.id);
      if (touchedRunIds.has(runId)) continue;
      if (run.status === "draft") {
        await trx("runs").where({ id: runId }).delete();
      } else {
        const version = run.version + 1;
        await trx("runs").where({ id: runId }).update({ status: "draft", version, drive_seconds: 0, drive_meters: 0, updated_at: trx.fn.now() as unknown as Date });
        messages.push(reopenedMessage(run.crew_name, version));
        const summary = crewSummaries.find((c) => c.crewId === Number(run.crew_id));
        if (summary) Object.assign(summary, { runId, status: "draft", version, reopened: true });
      }
      await trx("audit_log").insert({
        actor_user_id: actor,
        action: "run.plan",
        entity_type: "run",
        entity_id: String(runId),
        before: JSON.stringify({ status: run.status, version: run.version, stops: (day.stopsByRun.get(runId) ?? []).map((s) => s.visitId) }),
        after: JSON.stringify(run.status === "draft" ? { deleted: true } : { status: "draft", version: run.version + 1, stops: [] }),
      });
    }

    // Visits: planned ones scheduled, the rest deferred with the reason.
    const deferred: DeferredVisitSummary[] = plan.deferred.map((d) => {
      const visit = plannableById.get(Number(d.visitId))!;
      return {
        visitId: visit.visitId,
        yardName: visit.yardName,
        customerName: visit.customerName,
        colonies: visit.colonies,
        reason: d.reason,
        message: humanise(d.message, day.visitsById, day.crews),
      };
    });
    const deferredIds = new Set(deferred.map((d) => d.visitId));
    const planned = plannable.filter((v) => !deferredIds.has(v.visitId)).map((v) => v.visitId);
    if (planned.length > 0) {
      await trx("visits").whereIn("id", planned).update({ status: "scheduled", defer_reason: null, updated_at: trx.fn.now() as unknown as Date });
    }
    for (const d of deferred) {
      await trx("visits").where({ id: d.visitId }).update({ status: "deferred", defer_reason: d.message, updated_at: trx.fn.now() as unknown as Date });
    }

    const keptRuns = kept.map((run) => ({ runId: Number(run.id), crewId: Number(run.crew_id), crewName: run.crew_name, status: run.status }));
    for (const run of keptRuns) {
      if (run.status === "published") {
        messages.push(`${run.crewName}'s run is published and was kept as it is; re-plan published runs to include it.`);
      }
    }
    const summary: DayPlanSummary = {
      date,
      provider: travel.provider,
      notice: travel.notice,
      method: plannable.length > 0 ? plan.method : null,
      crews: crewSummaries,
      deferred,
      keptRuns,
      messages,
      colonies: crewSummaries.reduce((sum, c) => sum + c.colonies, 0),
      driveSeconds: crewSummaries.reduce((sum, c) => sum + c.driveSeconds, 0),
      driveMeters: crewSummaries.reduce((sum, c) => sum + c.driveMeters, 0),
    };
    await trx("audit_log").insert({
      actor_user_id: actor,
      action: "service_day.plan",
      entity_type: "service_day",
      entity_id: date,
      before: null,
      after: JSON.stringify({
        keepLocked: input.keepLocked,
        replanPublished: Boolean(input.replanPublished),
        provider: summary.provider,
        method: summary.method,
        crews: crewSummaries.map((c) => ({ crewId: c.crewId, runId: c.runId, stops: c.stops, colonies: c.colonies })),
        deferred: deferred.map((d) => ({ visitId: d.visitId, reason: d.reason })),
      }),
    });
    return summary;
  });
}

// ---------------------------------------------------------------------------------------
// Moving and locking stops

export type MovedRun = {
  runId: number | null;
  crewId: number;
  crewName: string;
  status: RunRow["status"] | null;
  version: number | null;
  visitIds: number[];
  driveSeconds: number;
  driveMeters: number;
  colonies: number;
  finishAt: Date | null;
  feasible: boolean;
  issues: StopIssue[];
};

export type MoveStopResult = {
  runs: MovedRun[];
  /** Every broken window and overrun in the runs concerned (the move is made regardless). */
  issues: StopIssue[];
  messages: string[];
  provider: TravelProviderName;
  notice: string | null;
};

/**
 * Moves a visit's stop to a position on a crew's run (the same run to reorder, another
 * crew's to move it; a deferred visit of the day is put on the run). Both runs are
 * re-timed in their new order. The move is never refused for timing: broken windows and an
 * overrun working day come back as issues for the screen to flag.
 */
export async function moveStop(
  db: Knex,
  input: { date: string; visitId: number; toCrewId: number; toPosition: number; actorUserId: number | string; travel?: TravelOptions },
): Promise<MoveStopResult> {
  assertDate(input.date);
  const settings = await loadBusinessSettings(db);
  const { date } = input;
  const timeZone = settings.timeZone;
  return db.transaction(async (trx) => {
    await lockServiceDay(trx, date);
    const day = await loadDay(trx, date, settings, true);
    const visit = day.visits.find((v) => v.visitId === Number(input.visitId));
    if (!visit) throw new DayPlanRefused("That visit is not open on this day.", "no_visit");
    const toCrew = day.activeCrews.find((c) => c.crewId === Number(input.toCrewId));
    if (!toCrew) throw new DayPlanRefused("That crew is not working that day; choose a crew that works it.", "no_crew");
    const runOf = (crewId: number) => day.runs.find((r) => Number(r.crew_id) === crewId) ?? null;
    const fromRun = visit.stop ? (day.runs.find((r) => Number(r.id) === visit.stop!.runId) ?? null) : null;
    const toRun = runOf(toCrew.crewId);
    for (const run of [fromRun, toRun]) {
      if (run && runUnderWay(day, run)) {
        throw new DayPlanRefused(`${run.crew_name}'s run is under way or done; its stops can no longer be moved.`, "run_under_way");
      }
    }

    const orderOf = (run: RunQueryRow | null) => (run ? (day.stopsByRun.get(Number(run.id)) ?? []).map((s) => s.visitId) : []);
    const fromCrewId = fromRun ? Number(fromRun.crew_id) : null;
    const orders = new Map<number, number[]>();
    if (fromRun && fromCrewId !== null) orders.set(fromCrewId, orderOf(fromRun).filter((id) => id !== visit.visitId));
    const target = (orders.get(toCrew.crewId) ?? orderOf(toRun)).filter((id) => id !== visit.visitId);
    const at = Math.max(0, Math.min(target.length, Math.trunc(Number(input.toPosition) || 0)));
    target.splice(at, 0, visit.visitId);
    orders.set(toCrew.crewId, target);
    const overLimit = crewLimitProblem(toCrew, target.map((id) => day.visitsById.get(id)!));
    if (overLimit) throw new DayPlanRefused(overLimit, "over_limit");

    const points = new PointIndex();
    for (const crewId of orders.keys()) {
      const crew = day.crews.get(crewId)!;
      points.add(crew.start);
      points.add(crew.end);
    }
    for (const order of orders.values()) for (const id of order) points.add(day.visitsById.get(id)!);
    const travel = await travelMatrixWithFallback(points.points, settings, input.travel);

    const messages: string[] = [];
    if (travel.notice) messages.push(travel.notice);
    const runs: MovedRun[] = [];
    for (const [crewId, order] of orders) {
      const crew = day.crews.get(crewId)!;
      const existing = runOf(crewId);
      if (order.length === 0) {
        // The run lost its only stop: a draft goes; a published one stays, empty, as a draft.
        let status: RunRow["status"] | null = null;
        let version: number | null = null;
        if (existing?.status === "draft") {
          await trx("runs").where({ id: existing.id }).delete();
        } else if (existing) {
          version = existing.version + 1;
          status = "draft";
          await trx("runs").where({ id: existing.id }).update({ status: "draft", version, drive_seconds: 0, drive_meters: 0, updated_at: trx.fn.now() as unknown as Date });
          messages.push(reopenedMessage(crew.name, version));
        }
        runs.push({
          runId: status ? Number(existing!.id) : null,
          crewId,
          crewName: crew.name,
          status,
          version,
          visitIds: [],
          driveSeconds: 0,
          driveMeters: 0,
          colonies: 0,
          finishAt: null,
          feasible: true,
          issues: [],
        });
        continue;
      }
      const timed = timeCrewRun(crew, order, day.visitsById, settings, points, travel.matrix);
      const draft = await draftRunFor(trx, crewId, date);
      if (draft.reopened) messages.push(reopenedMessage(crew.name, draft.version));
      const lockedNow = (id: number) => Boolean(day.visitsById.get(id)?.stop?.locked);
      await writeStops(trx, draft.runId, timedStops(timed, date, timeZone, lockedNow));
      await trx("runs")
        .where({ id: draft.runId })
        .update({ drive_seconds: Math.round(timed.driveSeconds), drive_meters: Math.round(timed.driveMetres), updated_at: trx.fn.now() as unknown as Date });
      const issues: StopIssue[] = timed.issues.map((issue) => ({
        kind: issue.kind,
        crewId,
        visitId: issue.visitId ? Number(issue.visitId) : null,
        minutes: issue.minutes,
        message: humanise(issue.message, day.visitsById, day.crews),
      }));
      runs.push({
        runId: draft.runId,
        crewId,
        crewName: crew.name,
        status: "draft",
        version: draft.version,
        visitIds: order,
        driveSeconds: Math.round(timed.driveSeconds),
        driveMeters: Math.round(timed.driveMetres),
        colonies: timed.colonies,
        finishAt: zonedDateTimeToInstant(date, timed.returnMin, timeZone),
        feasible: timed.feasible,
        issues,
      });
    }

    if (visit.status !== "scheduled" || visit.deferReason) {
      await trx("visits").where({ id: visit.visitId }).update({ status: "scheduled", defer_reason: null, updated_at: trx.fn.now() as unknown as Date });
    }
    const newRun = runs.find((r) => r.crewId === toCrew.crewId)!;
    await trx("audit_log").insert({
      actor_user_id: Number(input.actorUserId),
      action: "stop.move",
      entity_type: "visit",
      entity_id: String(visit.visitId),
      before: JSON.stringify(visit.stop ? { runId: visit.stop.runId, crewId: visit.stop.crewId, position: visit.stop.position } : { status: visit.status }),
      after: JSON.stringify({ runId: newRun.runId, crewId: toCrew.crewId, position: at }),
    });
    return {
      runs,
      issues: runs.flatMap((r) => r.issues),
      messages,
      provider: travel.provider,
      notice: travel.notice,
    };
  });
}

/** Locks a stop to its crew and position for re-planning (or unlocks it). */
export async function setStopLock(db: Knex, input: { visitId: number; locked: boolean; actorUserId: number | string }) {
  return db.transaction(async (trx) => {
    const stop = await trx("stops")
      .join("runs", "runs.id", "stops.run_id")
      .where("stops.visit_id", input.visitId)
      .forUpdate("stops")
      .first("stops.id", "stops.locked", "stops.run_id", "stops.position", "runs.crew_id", "runs.status");
    if (!stop) throw new DayPlanRefused("That visit is not on a run; plan the day or move it onto a run first.", "no_stop");
    if ((UNDER_WAY as readonly string[]).includes(stop.status)) {
      throw new DayPlanRefused("That run is under way or done; its stops can no longer be changed.", "run_under_way");
    }
    if (stop.locked !== input.locked) {
      await trx("stops").where({ id: stop.id }).update({ locked: input.locked, updated_at: trx.fn.now() as unknown as Date });
      await trx("audit_log").insert({
        actor_user_id: Number(input.actorUserId),
        action: input.locked ? "stop.lock" : "stop.unlock",
        entity_type: "visit",
        entity_id: String(input.visitId),
        before: JSON.stringify({ locked: stop.locked }),
        after: JSON.stringify({ locked: input.locked, runId: Number(stop.run_id), crewId: Number(stop.crew_id), position: stop.position }),
      });
    }
    return { visitId: Number(input.visitId), locked: input.locked, runId: Number(stop.run_id), crewId: Number(stop.crew_id), position: Number(stop.position) };
  });
}

// ---------------------------------------------------------------------------------------
// Publishing

export type PublishRunResult = {
  runId: number;
  crewName: string;
  serviceDate: string;
  version: number;
  /** False when the run was published already (nothing sent again). */
  published: boolean;
  recipients: string[];
};

/** Publishes a run to its crew and e-mails every crew member (after commit). */
export async function publishRun(db: Knex, input: { runId: number; actorUserId: number | string }): Promise<PublishRunResult> {
  const settings = await loadBusinessSettings(db);
  const { result, emailIds } = await db.transaction(async (trx) => {
    const found = await trx("runs").where({ id: input.runId }).first("service_date");
    if (!found) throw new DayPlanRefused("There is no run with that number.", "no_run");
    // The day's lock first, as planning and moving stops take it, then the run's row.
    await lockServiceDay(trx, found.service_date);
    const run = await trx("runs").where({ id: input.runId }).forUpdate().first();
    if (!run) throw new DayPlanRefused("There is no run with that number.", "no_run");
    const crew = await trx("crews").where({ id: run.crew_id }).first("name");
    const base = { runId: Number(run.id), crewName: crew?.name ?? "", serviceDate: run.service_date, version: run.version };
    if (run.status !== "draft") {
      if (run.status === "published") return { result: { ...base, published: false, recipients: [] }, emailIds: [] as number[] };
      throw new DayPlanRefused("That run is under way or done; it cannot be published again.", "run_under_way");
    }
    const stops = (await trx("stops")
      .join("visits", "visits.id", "stops.visit_id")
      .join("yards", "yards.id", "visits.yard_id")
      .where("stops.run_id", run.id)
      .orderBy("stops.position")
      .select("stops.position", "stops.arrive_at", "yards.name as yard_name", "visits.colonies_expected", "visits.yard_id")) as {
      position: number;
      arrive_at: Date;
      yard_name: string;
      colonies_expected: number;
      yard_id: number;
    }[];
    if (stops.length === 0) throw new DayPlanRefused("That run has no stops to publish.", "no_stops");
    const doses = await plannedYardDoses(trx, settings, stops.map((s) => Number(s.yard_id)));
    await trx("runs")
      .where({ id: run.id })
      .update({ status: "published", published_at: trx.fn.now() as unknown as Date, published_by: Number(input.actorUserId), updated_at: trx.fn.now() as unknown as Date });
    await trx("audit_log").insert({
      actor_user_id: Number(input.actorUserId),
      action: "run.publish",
      entity_type: "run",
      entity_id: String(run.id),
      before: JSON.stringify({ status: run.status, version: run.version }),
      after: JSON.stringify({ status: "published", version: run.version, stops: stops.length, service_date: run.service_date }),
    });
    const emailStops = stops.map((s, i) => ({
      position: i + 1,
      yardName: s.yard_name,
      arrive: zonedClockTime(new Date(s.arrive_at), settings.timeZone),
      colonies: s.colonies_expected,
      grams: gramsAtDosePerColony(s.colonies_expected, plannedDoseOf(doses, s.yard_id).dosePerColonyGrams),
    }));
    const email = runPublishedEmail({
      crewName: base.crewName,
      serviceDate: run.service_date,
      stops: emailStops,
      totalGrams: doseGramsForRun(emailStops.map((s) => s.grams)),
      appUrl: `${serverEnv().APP_URL}/crew`,
      version: run.version,
    });
    const members = (await trx("crew_members")
      .join("users", "users.id", "crew_members.user_id")
      .where("crew_members.crew_id", run.crew_id)
      .whereNull("users.disabled_at")
      .orderBy("users.id")
      .select("users.id", "users.email")) as { id: number; email: string }[];
    const ids: number[] = [];
    for (const member of members) {
      const id = await queueEmail(trx, {
        kind: "run_published",
        to: member.email,
        ...email,
        dedupeKey: `run_published:${run.id}:v${run.version}:user${member.id}`,
      });
      if (id !== null) ids.push(id);
    }
    return { result: { ...base, published: true, recipients: members.map((m) => m.email) }, emailIds: ids };
  });
  if (emailIds.length > 0) await requestEmailDelivery(emailIds);
  return result;
}

// ---------------------------------------------------------------------------------------
// Deferred visits

/** Days searched for room after a deferred visit's day. */
export const NEXT_DAY_SEARCH_DAYS = 60;

export type MoveToNextDayResult = { ok: true; date: string } | { ok: false; message: string };

/**
 * Moves an open visit (usually a deferred one) to the first day with room for its colonies:
 * from the day after its own day (and never before tomorrow), within 60 days. The customer
 * is e-mailed the new date (rescheduleVisit).
 */
export async function moveDeferredToNextDayWithRoom(
  db: Knex,
  input: { visitId: number; actorUserId: number | string },
  now = new Date(),
): Promise<MoveToNextDayResult> {
  const settings = await loadBusinessSettings(db);
  const visit = await db("visits").where({ id: input.visitId }).first("id", "service_date", "status", "colonies_expected");
  if (!visit) return { ok: false, message: "There is no visit with that number." };
  if (!(OPEN_STATUSES as readonly string[]).includes(visit.status)) {
    return { ok: false, message: "Only a visit that has not started can be moved." };
  }
  const tomorrow = addCalendarDays(dateInZone(now, settings.timeZone), 1);
  const afterOwnDay = addCalendarDays(visit.service_date, 1);
  const from = calendarDaysBetween(tomorrow, afterOwnDay) > 0 ? afterOwnDay : tomorrow;
  const to = addCalendarDays(from, NEXT_DAY_SEARCH_DAYS - 1);
  const days = await roomBetween(db, settings, from, to);
  const candidates = days.filter((d) => !d.closed && d.remaining >= visit.colonies_expected);
  for (const day of candidates) {
    try {
      await rescheduleVisit(db, {
        visitId: visit.id,
        toDate: day.date,
        reason: `The crews' route for ${formatServiceDate(visit.service_date)} was full.`,
        actorUserId: input.actorUserId,
      }, now);
      return { ok: true, date: day.date };
    } catch (error) {
      // Another booking may have taken the room meanwhile: try the next day.
      if (error instanceof VisitChangeRefused && error.field === "toDate") continue;
      if (error instanceof VisitChangeRefused) return { ok: false, message: error.message };
      throw error;
    }
  }
  return {
    ok: false,
    message: `No day from ${formatServiceDate(from)} to ${formatServiceDate(to)} has room for ${visit.colonies_expected} more ${visit.colonies_expected === 1 ? "colony" : "colonies"}; choose a day yourself or raise a day's capacity.`,
  };
}
