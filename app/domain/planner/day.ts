/**
 * The day planner: which visits each crew serves and in what order.
 *
 * Objective, in order: serve as many colonies as possible; then drive as little as
 * possible (seconds, return to the end point included); then, between otherwise equal
 * plans, serve the earliest booking. Hard rules, never broken: service starts at or after
 * its window start and ends by its window end; each crew leaves its start point no earlier
 * than workStartMin and is back at its end point by workEndMin; a crew never serves more
 * colonies or grams in the day than its daily limits; locked visits stay with their crew in
 * their locked order (only if the locked stops cannot all be kept on time and within the
 * crew's limits is one deferred). What does not fit is deferred with the reason.
 *
 * Method: up to exactMaxVisits plannable visits (default 12), the whole day is solved
 * exactly (exact.ts). Above, insertion + local search + ruin-and-recreate (heuristic.ts),
 * after which every route of ≤ 12 stops is re-ordered optimally. Deterministic: the same
 * input and seed give the same plan, whatever the order of the input arrays' visits.
 */

import { bestOrder, EXACT_DAY_HARD_LIMIT, EXACT_ROUTE_MAX, solveCrewsExact } from "./exact";
import { solveDayHeuristic } from "./heuristic";
import { buildProblem, loadFits, loadOf, type Problem, TIME_EPS } from "./problem";
import { buildRun, fitsAlone, routeCost, routeTimingCost, stopTimes } from "./schedule";
import type {
  DayPlan,
  DeferredVisit,
  PlanCrew,
  PlanDayInput,
  PlanVisit,
  RecomputedRun,
  TimingIssue,
  TravelMatrix,
} from "./types";

export const DEFAULT_EXACT_MAX_VISITS = 12;

export function planDay(input: PlanDayInput): DayPlan {
  const options = input.options ?? {};
  const seed = options.seed ?? 1;
  const method = options.method ?? "auto";
  const exactMax = Math.min(options.exactMaxVisits ?? DEFAULT_EXACT_MAX_VISITS, EXACT_DAY_HARD_LIMIT);
  const p = buildProblem(input.visits, input.crews, input.matrix);
  const deferred = new Map<number, DeferredVisit>();
  const defer = (v: number, reason: DeferredVisit["reason"], message: string): void => {
    const visit = p.visits[v];
    deferred.set(v, { visitId: visit.id, colonies: visit.colonies, reason, message });
  };

  // 1. Visits no crew can take at all.
  const allowed = new Uint8Array(p.crewCount * p.n);
  for (let v = 0; v < p.n; v++) {
    const visit = p.visits[v];
    if (p.crewCount === 0) {
      defer(v, "no_crew", `No crew is working this day, so visit ${visit.id} cannot be planned.`);
      continue;
    }
    if (p.unknownLockCrew[v] !== null) {
      defer(v, "no_crew", `Visit ${visit.id} is locked to crew ${p.unknownLockCrew[v]}, which is not working this day.`);
      continue;
    }
    let any = false;
    for (let c = 0; c < p.crewCount; c++) {
      if (fitsAlone(p, c, v)) {
        allowed[c * p.n + v] = 1;
        any = true;
      }
    }
    if (any) continue;
    if (overEveryLimit(p, v)) defer(v, "does_not_fit_day", overLimitMessage(p, v));
    else defer(v, "outside_every_window", outsideMessage(p, v));
  }

  // 2. Each crew's locked visits, in locked order, as far as they fit together (taken by
  //    position, then booking; each kept if some order allowed by the locks is on time).
  const keptLocked: number[][] = [];
  for (let c = 0; c < p.crewCount; c++) {
    const locked: number[] = [];
    for (let v = 0; v < p.n; v++) if (p.lockCrew[v] === c && !deferred.has(v)) locked.push(v);
    locked.sort((a, b) => p.lockRank[a] - p.lockRank[b] || a - b);
    let kept: number[] = [];
    for (const v of locked) {
      const withV = lockedOrder(p, c, [...kept, v]);
      if (withV) kept = withV;
      else {
        const load = loadOf(p, [...kept, v]);
        defer(
          v,
          "does_not_fit_day",
          loadFits(p, c, load.colonies, load.centigrams)
            ? `Visit ${p.visits[v].id} is locked to crew ${p.crews[c].id}, but it cannot be kept on time together with that crew's locked stops before it.`
            : `Visit ${p.visits[v].id} is locked to crew ${p.crews[c].id}, but together with that crew's locked stops before it, it would take the crew past its daily limit (${limitText(p, c)}).`,
        );
      }
    }
    keptLocked.push(kept);
  }

  // 3. Plan the rest.
  const candidates: number[] = [];
  for (let v = 0; v < p.n; v++) if (!deferred.has(v)) candidates.push(v);
  const useExact = method === "exact" || (method === "auto" && candidates.length <= exactMax);
  if (method === "exact" && candidates.length > EXACT_DAY_HARD_LIMIT) {
    throw new RangeError(`planDay: method "exact" handles at most ${EXACT_DAY_HARD_LIMIT} plannable visits, got ${candidates.length}`);
  }
  let routes: number[][];
  if (p.crewCount === 0) routes = [];
  else if (useExact) {
    const crews = Array.from({ length: p.crewCount }, (_, c) => c);
    routes = solveCrewsExact(p, crews, candidates, (c, v) => allowed[c * p.n + v] === 1, keptLocked);
  } else {
    routes = solveDayHeuristic(p, candidates, allowed, keptLocked, { seed, iterations: options.iterations });
  }

  const served = new Set<number>();
  for (const route of routes) for (const v of route) served.add(v);
  for (const v of candidates) {
    if (served.has(v)) continue;
    const visit = p.visits[v];
    defer(
      v,
      "does_not_fit_day",
      `Visit ${visit.id} (${visit.colonies} ${visit.colonies === 1 ? "colony" : "colonies"}) does not fit into any crew's day${p.hasLimits ? ", within the crews' working hours and daily limits," : ""} alongside the visits planned; move it to another day or add a crew.`,
    );
  }

  const runs = routes.map((route, c) => buildRun(p, c, route));
  return {
    runs,
    deferred: [...deferred.entries()].sort((a, b) => a[0] - b[0]).map(([, d]) => d),
    colonies: runs.reduce((sum, r) => sum + r.colonies, 0),
    driveSeconds: runs.reduce((sum, r) => sum + r.driveSeconds, 0),
    driveMetres: runs.reduce((sum, r) => sum + r.driveMetres, 0),
    method: useExact ? "exact" : "heuristic",
  };
}

/** A feasible order of these locked visits for the crew (least drive), or null. */
function lockedOrder(p: Problem, crew: number, visits: number[]): number[] | null {
  if (visits.length <= EXACT_ROUTE_MAX) return bestOrder(p, crew, visits)?.route ?? null;
  // Beyond the DP: positions in order, equal positions by booking.
  return routeCost(p, crew, visits) < Infinity ? visits : null;
}

/** "08:05" for minutes from midnight (fractions rounded to the minute). */
export function clockTime(minutes: number): string {
  const total = Math.round(minutes);
  const h = Math.floor(total / 60);
  const m = total % 60;
  return `${String(h).padStart(2, "0")}:${String(m).padStart(2, "0")}`;
}

/**
 * For a visit no crew can serve even alone: true when some crew could serve it in time but
 * not within its daily limits (so the limit, not the clock, is what keeps it off the day).
 */
function overEveryLimit(p: Problem, v: number): boolean {
  for (let c = 0; c < p.crewCount; c++) {
    if (p.lockCrew[v] >= 0 && p.lockCrew[v] !== c) continue;
    if (!loadFits(p, c, p.colonies[v], p.centigrams[v]) && routeTimingCost(p, c, [v]) < Infinity) return true;
  }
  return false;
}

/** "12 colonies, 30 g" — a crew's daily limits in words. */
function limitText(p: Problem, c: number): string {
  const parts: string[] = [];
  if (p.maxColonies[c] !== Infinity) parts.push(`${p.maxColonies[c]} ${p.maxColonies[c] === 1 ? "colony" : "colonies"}`);
  if (p.maxCentigrams[c] !== Infinity) parts.push(`${p.maxCentigrams[c] / 100} g`);
  return parts.join(", ");
}

function overLimitMessage(p: Problem, v: number): string {
  const visit = p.visits[v];
  const grams = p.centigrams[v] > 0 ? `, ${p.centigrams[v] / 100} g` : "";
  return `Visit ${visit.id} (${visit.colonies} ${visit.colonies === 1 ? "colony" : "colonies"}${grams}) is more than any working crew may take in a day by its daily limit; split the visit, move it to another day or raise a crew's limit.`;
}

function outsideMessage(p: Problem, v: number): string {
  const visit = p.visits[v];
  const window = `${clockTime(visit.window.startMin)}–${clockTime(visit.window.endMin)}`;
  if (visit.serviceMinutes > visit.window.endMin - visit.window.startMin) {
    return `Visit ${visit.id} needs ${visit.serviceMinutes} minutes of service, longer than its window ${window}.`;
  }
  if (p.lockCrew[v] >= 0) {
    return `Visit ${visit.id} is locked to crew ${p.crews[p.lockCrew[v]].id}, whose working hours cannot fit its window ${window} with the drive there and back.`;
  }
  return `No crew can reach visit ${visit.id}, serve it within its window ${window} and be back within working hours.`;
}

/**
 * Times of a crew's stops in a given order, e.g. after a dispatcher drags a stop. Nothing
 * is re-planned: service starts at max(arrival, window start), and every window that would
 * be missed and any overrun of the working day are reported as issues.
 */
export function recomputeTimes(
  crew: PlanCrew,
  orderedVisitIds: readonly string[],
  visits: readonly PlanVisit[],
  matrix: TravelMatrix,
): RecomputedRun {
  const byId = new Map(visits.map((v) => [v.id, v]));
  const chosen = orderedVisitIds.map((id) => {
    const visit = byId.get(id);
    if (!visit) throw new RangeError(`recomputeTimes: unknown visit id "${id}"`);
    return visit;
  });
  if (new Set(orderedVisitIds).size !== orderedVisitIds.length) throw new RangeError("recomputeTimes: a visit appears twice");
  const p = buildProblem(chosen, [crew], matrix);
  const indexOf = new Map(p.visits.map((v, i) => [v.id, i]));
  const route = orderedVisitIds.map((id) => indexOf.get(id)!);
  const run = buildRun(p, 0, route);
  const times = stopTimes(p, 0, route);
  const issues: TimingIssue[] = [];
  route.forEach((v, i) => {
    const visit = p.visits[v];
    const late = times.leave[i] - visit.window.endMin * 60;
    if (late > TIME_EPS) {
      issues.push({
        kind: "window_missed",
        visitId: visit.id,
        minutes: late / 60,
        message: `Visit ${visit.id} would finish at ${clockTime(times.leave[i] / 60)}, ${formatMinutes(late / 60)} after its window closes at ${clockTime(visit.window.endMin)}.`,
      });
    }
  });
  const over = route.length > 0 ? times.returnAt - p.workEnd[0] : 0;
  if (over > TIME_EPS) {
    issues.push({
      kind: "work_day_overrun",
      minutes: over / 60,
      message: `Crew ${crew.id} would be back at ${clockTime(times.returnAt / 60)}, ${formatMinutes(over / 60)} after the working day ends at ${clockTime(crew.workEndMin)}.`,
    });
  }
  return { ...run, feasible: issues.length === 0, issues };
}

function formatMinutes(minutes: number): string {
  const rounded = Math.max(1, Math.round(minutes));
  return `${rounded} min`;
}
