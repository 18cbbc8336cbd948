/**
 * Public types of the day planner (planDay, recomputeTimes).
 *
 * Times of day are minutes from midnight; travel comes from a matrix in seconds and
 * metres. Planned times are exact (seconds ÷ 60), so they may carry fractions of a minute;
 * screens round them for display.
 */

/** A visit's service window: service starts at or after startMin and ends by endMin. */
export interface TimeWindow {
  startMin: number;
  endMin: number;
}

/**
 * Pinned by the dispatcher: served by this crew, in `position` order among its locked stops
 * (equal positions in either order); unlocked stops may go before, between and after.
 */
export interface VisitLock {
  crewId: string;
  position: number;
}

export interface PlanVisit {
  id: string;
  /** Row/column of the visit's yard in the travel matrix. */
  pointIndex: number;
  colonies: number;
  serviceMinutes: number;
  window: TimeWindow;
  /** ISO timestamp of the booking; earlier bookings win ties. */
  bookedAt: string;
  locked?: VisitLock;
  /** Grams of oxalic acid dihydrate the visit takes (counts against a crew's gram limit; default 0). */
  doseGrams?: number;
}

export interface PlanCrew {
  id: string;
  /** Matrix index of the point the crew leaves from (usually the depot). */
  startIndex: number;
  /** Matrix index of the point the crew must be back at by workEndMin. */
  endIndex: number;
  workStartMin: number;
  workEndMin: number;
  /** The most colonies the crew may serve in the day (null or absent: no limit). A hard rule. */
  maxColonies?: number | null;
  /** The most grams the crew may apply in the day (null or absent: no limit). A hard rule. */
  maxDoseGrams?: number | null;
}

/** Travel between matrix points: seconds[i][j] and metres[i][j] from point i to point j. */
export interface TravelMatrix {
  seconds: readonly (readonly number[])[];
  metres: readonly (readonly number[])[];
}

export type PlanMethod = "auto" | "exact" | "heuristic";

export interface PlanDayOptions {
  /** Seed of the search's random choices (default 1). Same input + seed → same plan. */
  seed?: number;
  /**
   * "exact" solves the whole day by dynamic programming over subsets (at most
   * EXACT_DAY_HARD_LIMIT plannable visits); "heuristic" always uses insertion + local search;
   * "auto" (default) is exact up to exactMaxVisits plannable visits.
   */
  method?: PlanMethod;
  /** Largest number of plannable visits solved exactly under "auto" (default 12). */
  exactMaxVisits?: number;
  /** Ruin-and-recreate rounds of the heuristic (default depends on the day's size). */
  iterations?: number;
}

export interface PlanDayInput {
  visits: readonly PlanVisit[];
  crews: readonly PlanCrew[];
  matrix: TravelMatrix;
  options?: PlanDayOptions;
}

export interface PlannedStop {
  visitId: string;
  pointIndex: number;
  colonies: number;
  /** Arrival at the yard. */
  arriveMin: number;
  /** Minutes waited for the window to open (startMin − arriveMin). */
  waitMin: number;
  /** Service start: max(arrival, window start). */
  startMin: number;
  /** Service end: startMin + serviceMinutes. */
  leaveMin: number;
  /** Drive from the previous point (crew start or previous stop). */
  driveSecondsIn: number;
  driveMetresIn: number;
  locked: boolean;
}

export interface CrewRun {
  crewId: string;
  /** Leaves the start point; delayed past workStartMin only to avoid waiting at the first stop. */
  departMin: number;
  /** Back at the end point (equals departMin for an idle crew, which does not drive). */
  returnMin: number;
  stops: PlannedStop[];
  /** Total drive, including the return to the end point. */
  driveSeconds: number;
  driveMetres: number;
  colonies: number;
}

export type DeferReason = "does_not_fit_day" | "outside_every_window" | "no_crew";

export interface DeferredVisit {
  visitId: string;
  colonies: number;
  reason: DeferReason;
  message: string;
}

export interface DayPlan {
  /** One run per crew, in input order (idle crews have no stops). */
  runs: CrewRun[];
  /** Visits not planned, earliest booking first. */
  deferred: DeferredVisit[];
  colonies: number;
  driveSeconds: number;
  driveMetres: number;
  method: "exact" | "heuristic";
}

export type TimingIssueKind = "window_missed" | "work_day_overrun";

export interface TimingIssue {
  kind: TimingIssueKind;
  /** The stop concerned (absent for the work-day overrun). */
  visitId?: string;
  /** By how many minutes the window end or the working day is exceeded. */
  minutes: number;
  message: string;
}

/** A run re-timed in a given order (e.g. after a dispatcher drags a stop), with its problems. */
export interface RecomputedRun extends CrewRun {
  feasible: boolean;
  issues: TimingIssue[];
}
