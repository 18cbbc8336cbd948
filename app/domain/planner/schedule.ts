/**
 * Timing and feasibility of one crew's route (an ordered list of visit indexes).
 *
 * A crew leaves its start point at workStart, drives to each stop, waits if it arrives
 * before the window opens, serves, and drives on; at the end it returns to its end point.
 * A route is feasible when every service starts at or after its window start and ends by its
 * window end, the crew is back by workEnd, locked visits belong to this crew and come in
 * their locked order, and its colonies and grams stay within the crew's daily limits. An
 * empty route is an idle crew: it does not drive (drive 0).
 *
 * RouteInfo holds, for O(1) insertion checks, the earliest departure from each point of the
 * route and the latest arrival at each point that still keeps the rest of the route on time
 * (the "forward time slack" idea of Savelsbergh 1992), plus prefix sums of the drive in both
 * directions for O(1) drive deltas of reversals.
 */

import { distance, loadFits, loadOf, type Problem, TIME_EPS, travel } from "./problem";
import type { CrewRun, PlannedStop } from "./types";

/** Drive seconds of a feasible route, or Infinity if it breaks a window, the day, a lock or the crew's daily limits. */
export function routeCost(p: Problem, crew: number, route: readonly number[]): number {
  if (p.hasLimits) {
    const load = loadOf(p, route);
    if (!loadFits(p, crew, load.colonies, load.centigrams)) return Infinity;
  }
  return routeTimingCost(p, crew, route);
}

/** Drive seconds of a route that keeps its windows, the working day and its locks (daily limits not checked), or Infinity. */
export function routeTimingCost(p: Problem, crew: number, route: readonly number[]): number {
  const length = route.length;
  if (length === 0) return 0;
  let time = p.workStart[crew];
  let at = p.crewStart[crew];
  let drive = 0;
  let lastLock = -1;
  for (let i = 0; i < length; i++) {
    const v = route[i];
    const lockedTo = p.lockCrew[v];
    if (lockedTo >= 0) {
      if (lockedTo !== crew || p.lockRank[v] < lastLock) return Infinity;
      lastLock = p.lockRank[v];
    }
    const next = p.point[v];
    const leg = travel(p, at, next);
    drive += leg;
    time += leg;
    if (time < p.earliest[v]) time = p.earliest[v];
    if (time > p.latestStart[v] + TIME_EPS) return Infinity;
    time += p.service[v];
    at = next;
  }
  const back = travel(p, at, p.crewEnd[crew]);
  if (time + back > p.workEnd[crew] + TIME_EPS) return Infinity;
  return drive + back;
}

/** True if the visit can be served by this crew on a day with no other stops. */
export function fitsAlone(p: Problem, crew: number, v: number): boolean {
  const lockedTo = p.lockCrew[v];
  if (lockedTo >= 0 && lockedTo !== crew) return false;
  return routeCost(p, crew, [v]) < Infinity;
}

export class RouteInfo {
  /** Matrix points: start, the route's stops, end. */
  readonly pts: Int32Array;
  /** forward[k] = drive along pts[0…k]. */
  readonly forward: Float64Array;
  /** backward[k] = drive of pts[0…k] travelled in reverse (pts[k] → … → pts[0]). */
  readonly backward: Float64Array;
  /** Earliest departure from pts[k] (k = 0 is the start point at workStart). */
  readonly departs: Float64Array;
  /** Latest arrival at pts[k] (k ≥ 1) that keeps every later stop and the return on time. */
  readonly latestArrival: Float64Array;
  /** Colonies and centigrams the route serves, for the daily limits. */
  readonly colonies: number;
  readonly centigrams: number;

  constructor(
    private readonly p: Problem,
    readonly crew: number,
    readonly route: readonly number[],
  ) {
    const length = route.length;
    const pts = new Int32Array(length + 2);
    pts[0] = p.crewStart[crew];
    for (let i = 0; i < length; i++) pts[i + 1] = p.point[route[i]];
    pts[length + 1] = p.crewEnd[crew];
    this.pts = pts;
    const forward = new Float64Array(length + 2);
    const backward = new Float64Array(length + 2);
    for (let k = 1; k < length + 2; k++) {
      forward[k] = forward[k - 1] + travel(p, pts[k - 1], pts[k]);
      backward[k] = backward[k - 1] + travel(p, pts[k], pts[k - 1]);
    }
    this.forward = forward;
    this.backward = backward;
    const departs = new Float64Array(length + 1);
    departs[0] = p.workStart[crew];
    for (let k = 1; k <= length; k++) {
      const v = route[k - 1];
      const arrive = departs[k - 1] + travel(p, pts[k - 1], pts[k]);
      departs[k] = Math.max(arrive, p.earliest[v]) + p.service[v];
    }
    this.departs = departs;
    const latest = new Float64Array(length + 2);
    latest[length + 1] = p.workEnd[crew];
    for (let k = length; k >= 1; k--) {
      const v = route[k - 1];
      latest[k] = Math.min(p.latestStart[v], latest[k + 1] - travel(p, pts[k], pts[k + 1]) - p.service[v]);
    }
    this.latestArrival = latest;
    const load = loadOf(p, route);
    this.colonies = load.colonies;
    this.centigrams = load.centigrams;
  }

  /** Current drive (0 for an idle crew). */
  get drive(): number {
    return this.route.length === 0 ? 0 : this.forward[this.route.length + 1];
  }

  /**
   * Added drive if unlocked visit v is inserted between pts[gap] and pts[gap + 1]
   * (gap 0…route.length), or Infinity if that breaks a window, the working day or the crew's
   * daily limits.
   */
  insertionDelta(v: number, gap: number): number {
    const p = this.p;
    if (p.hasLimits && !loadFits(p, this.crew, this.colonies + p.colonies[v], this.centigrams + p.centigrams[v])) return Infinity;
    const from = this.pts[gap];
    const to = this.pts[gap + 1];
    const at = p.point[v];
    const legIn = travel(p, from, at);
    let start = this.departs[gap] + legIn;
    if (start < p.earliest[v]) start = p.earliest[v];
    if (start > p.latestStart[v] + TIME_EPS) return Infinity;
    const legOut = travel(p, at, to);
    if (start + p.service[v] + legOut > this.latestArrival[gap + 1] + TIME_EPS) return Infinity;
    return legIn + legOut - (this.route.length === 0 ? 0 : travel(p, from, to));
  }

  /** Drive of pts[a…b] travelled forward (a ≤ b). */
  pathForward(a: number, b: number): number {
    return this.forward[b] - this.forward[a];
  }

  /** Drive of pts[a…b] travelled backward, from pts[b] to pts[a] (a ≤ b). */
  pathBackward(a: number, b: number): number {
    return this.backward[b] - this.backward[a];
  }
}

export interface StopTimes {
  arrive: number[];
  start: number[];
  leave: number[];
  depart: number;
  returnAt: number;
}

/**
 * Times along a route in seconds, without checking anything: service starts at
 * max(arrival, window start). The departure is put off past workStart only as far as it
 * removes waiting at the first stop.
 */
export function stopTimes(p: Problem, crew: number, route: readonly number[]): StopTimes {
  const arrive: number[] = [];
  const start: number[] = [];
  const leave: number[] = [];
  let depart = p.workStart[crew];
  if (route.length === 0) return { arrive, start, leave, depart, returnAt: depart };
  const first = route[0];
  const firstLeg = travel(p, p.crewStart[crew], p.point[first]);
  depart = Math.max(depart, p.earliest[first] - firstLeg);
  let time = depart;
  let at = p.crewStart[crew];
  for (const v of route) {
    time += travel(p, at, p.point[v]);
    arrive.push(time);
    time = Math.max(time, p.earliest[v]);
    start.push(time);
    time += p.service[v];
    leave.push(time);
    at = p.point[v];
  }
  return { arrive, start, leave, depart, returnAt: time + travel(p, at, p.crewEnd[crew]) };
}

const toMin = (seconds: number): number => seconds / 60;

/** The public run of a crew for a route. */
export function buildRun(p: Problem, crew: number, route: readonly number[]): CrewRun {
  const times = stopTimes(p, crew, route);
  const stops: PlannedStop[] = [];
  let at = p.crewStart[crew];
  let driveSeconds = 0;
  let driveMetres = 0;
  let colonies = 0;
  route.forEach((v, i) => {
    const visit = p.visits[v];
    const legSeconds = travel(p, at, visit.pointIndex);
    const legMetres = distance(p, at, visit.pointIndex);
    driveSeconds += legSeconds;
    driveMetres += legMetres;
    colonies += visit.colonies;
    stops.push({
      visitId: visit.id,
      pointIndex: visit.pointIndex,
      colonies: visit.colonies,
      arriveMin: toMin(times.arrive[i]),
      waitMin: toMin(times.start[i] - times.arrive[i]),
      startMin: toMin(times.start[i]),
      leaveMin: toMin(times.leave[i]),
      driveSecondsIn: legSeconds,
      driveMetresIn: legMetres,
      locked: visit.locked !== undefined,
    });
    at = visit.pointIndex;
  });
  if (route.length > 0) {
    driveSeconds += travel(p, at, p.crewEnd[crew]);
    driveMetres += distance(p, at, p.crewEnd[crew]);
  }
  return {
    crewId: p.crews[crew].id,
    departMin: toMin(times.depart),
    returnMin: toMin(times.returnAt),
    stops,
    driveSeconds,
    driveMetres,
    colonies,
  };
}
