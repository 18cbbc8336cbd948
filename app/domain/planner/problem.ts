/**
 * The day planner's internal model: the input validated and turned into flat arrays in
 * seconds. Visits are re-indexed in booking order (bookedAt, then id), so a visit's index
 * is its tie-break rank and the plan does not depend on the order of the input array.
 *
 * A crew's daily limits (colonies, grams) are kept with each crew; doses are compared in
 * whole centigrams, as they are kept (dose.ts), so sums never drift.
 */

import { gramsToCentigrams } from "../dose";
import type { PlanCrew, PlanVisit, TravelMatrix } from "./types";

export const TIME_EPS = 1e-6;

export interface Problem {
  /** Number of visits. */
  n: number;
  /** Visits in booking order; index = rank. */
  visits: readonly PlanVisit[];
  point: Int32Array;
  colonies: Float64Array;
  /** Service duration, seconds. */
  service: Float64Array;
  /** Window start, seconds from midnight. */
  earliest: Float64Array;
  /** Latest service start (window end − service), seconds. */
  latestStart: Float64Array;
  /** Crew index a visit is locked to, or −1. */
  lockCrew: Int32Array;
  /**
   * Rank of a locked visit's position among its crew's locked visits (0, 1, …; equal
   * positions share a rank and may come in either order), or −1.
   */
  lockRank: Int32Array;
  crews: readonly PlanCrew[];
  crewCount: number;
  crewStart: Int32Array;
  crewEnd: Int32Array;
  /** Seconds from midnight. */
  workStart: Float64Array;
  workEnd: Float64Array;
  /** Matrix size. */
  size: number;
  /** Flat seconds[i * size + j]. */
  seconds: Float64Array;
  metres: Float64Array;
  /** Crew ids of locks that name no crew of the day, by visit index (else null). */
  unknownLockCrew: (string | null)[];
  /** Dose of each visit in whole centigrams. */
  centigrams: Float64Array;
  /** Each crew's colony limit for the day (Infinity: none). */
  maxColonies: Float64Array;
  /** Each crew's gram limit for the day in centigrams (Infinity: none). */
  maxCentigrams: Float64Array;
  /** True when some crew has a limit (so load checks can be skipped otherwise). */
  hasLimits: boolean;
}

/** Whether a crew may serve this many colonies and centigrams in its day. */
export function loadFits(p: Problem, crew: number, colonies: number, centigrams: number): boolean {
  return colonies <= p.maxColonies[crew] && centigrams <= p.maxCentigrams[crew];
}

/** Colonies and centigrams of a list of visits. */
export function loadOf(p: Problem, visits: readonly number[]): { colonies: number; centigrams: number } {
  let colonies = 0;
  let centigrams = 0;
  for (const v of visits) {
    colonies += p.colonies[v];
    centigrams += p.centigrams[v];
  }
  return { colonies, centigrams };
}


export function travel(p: Problem, from: number, to: number): number {
  return p.seconds[from * p.size + to];
}

export function distance(p: Problem, from: number, to: number): number {
  return p.metres[from * p.size + to];
}

function fail(message: string): never {
  throw new RangeError(`planDay: ${message}`);
}

function checkMinutes(value: number, what: string): void {
  if (!Number.isFinite(value) || value < 0) fail(`${what} must be minutes from midnight (≥ 0), got ${value}`);
}

function flatMatrix(rows: readonly (readonly number[])[], size: number, what: string): Float64Array {
  if (rows.length !== size) fail(`matrix.${what} must be ${size}×${size}`);
  const flat = new Float64Array(size * size);
  for (let i = 0; i < size; i++) {
    const row = rows[i];
    if (!row || row.length !== size) fail(`matrix.${what} must be ${size}×${size}`);
    for (let j = 0; j < size; j++) {
      const value = row[j];
      if (!Number.isFinite(value) || value < 0) fail(`matrix.${what}[${i}][${j}] must be a non-negative number`);
      flat[i * size + j] = value;
    }
  }
  return flat;
}

export function buildProblem(visitsIn: readonly PlanVisit[], crews: readonly PlanCrew[], matrix: TravelMatrix): Problem {
  const size = matrix.seconds.length;
  const seconds = flatMatrix(matrix.seconds, size, "seconds");
  const metres = flatMatrix(matrix.metres, size, "metres");
  const checkIndex = (index: number, what: string): void => {
    if (!Number.isInteger(index) || index < 0 || index >= size) fail(`${what} ${index} is not a matrix index (0…${size - 1})`);
  };

  const crewIndex = new Map<string, number>();
  crews.forEach((crew, c) => {
    if (crewIndex.has(crew.id)) fail(`crew id "${crew.id}" appears twice`);
    crewIndex.set(crew.id, c);
    checkIndex(crew.startIndex, `crew ${crew.id} startIndex`);
    checkIndex(crew.endIndex, `crew ${crew.id} endIndex`);
    checkMinutes(crew.workStartMin, `crew ${crew.id} workStartMin`);
    checkMinutes(crew.workEndMin, `crew ${crew.id} workEndMin`);
    if (crew.workEndMin < crew.workStartMin) fail(`crew ${crew.id} ends work before it starts`);
    if (crew.maxColonies != null && (!Number.isFinite(crew.maxColonies) || crew.maxColonies < 0)) fail(`crew ${crew.id} maxColonies must be a number ≥ 0`);
    if (crew.maxDoseGrams != null && (!Number.isFinite(crew.maxDoseGrams) || crew.maxDoseGrams < 0)) fail(`crew ${crew.id} maxDoseGrams must be a number ≥ 0`);
  });

  const keyed = visitsIn.map((visit) => {
    const at = Date.parse(visit.bookedAt);
    if (Number.isNaN(at)) fail(`visit ${visit.id} bookedAt "${visit.bookedAt}" is not an ISO date-time`);
    return { visit, at };
  });
  keyed.sort((a, b) => a.at - b.at || (a.visit.id < b.visit.id ? -1 : a.visit.id > b.visit.id ? 1 : 0));
  const visits = keyed.map((k) => k.visit);
  const n = visits.length;

  const seen = new Set<string>();
  const point = new Int32Array(n);
  const colonies = new Float64Array(n);
  const service = new Float64Array(n);
  const earliest = new Float64Array(n);
  const latestStart = new Float64Array(n);
  const lockCrew = new Int32Array(n).fill(-1);
  const lockRank = new Int32Array(n).fill(-1);
  const unknownLockCrew: (string | null)[] = new Array<string | null>(n).fill(null);
  const centigrams = new Float64Array(n);
  visits.forEach((visit, v) => {
    if (seen.has(visit.id)) fail(`visit id "${visit.id}" appears twice`);
    seen.add(visit.id);
    checkIndex(visit.pointIndex, `visit ${visit.id} pointIndex`);
    if (!Number.isInteger(visit.colonies) || visit.colonies < 0) fail(`visit ${visit.id} colonies must be a whole number ≥ 0`);
    if (!Number.isFinite(visit.serviceMinutes) || visit.serviceMinutes < 0) fail(`visit ${visit.id} serviceMinutes must be ≥ 0`);
    if (visit.doseGrams !== undefined && (!Number.isFinite(visit.doseGrams) || visit.doseGrams < 0)) fail(`visit ${visit.id} doseGrams must be ≥ 0`);
    centigrams[v] = gramsToCentigrams(visit.doseGrams ?? 0);
    checkMinutes(visit.window.startMin, `visit ${visit.id} window.startMin`);
    checkMinutes(visit.window.endMin, `visit ${visit.id} window.endMin`);
    if (visit.window.endMin < visit.window.startMin) fail(`visit ${visit.id} window ends before it starts`);
    point[v] = visit.pointIndex;
    colonies[v] = visit.colonies;
    service[v] = visit.serviceMinutes * 60;
    earliest[v] = visit.window.startMin * 60;
    latestStart[v] = visit.window.endMin * 60 - service[v];
    if (visit.locked) {
      if (!Number.isFinite(visit.locked.position)) fail(`visit ${visit.id} locked.position must be a number`);
      const c = crewIndex.get(visit.locked.crewId);
      if (c === undefined) unknownLockCrew[v] = visit.locked.crewId;
      else lockCrew[v] = c;
    }
  });

  // Rank the locked visits of each crew by position (dense: equal positions, equal rank).
  for (let c = 0; c < crews.length; c++) {
    const positions = new Set<number>();
    for (let v = 0; v < n; v++) if (lockCrew[v] === c) positions.add(visits[v].locked!.position);
    const ranks = new Map([...positions].sort((a, b) => a - b).map((position, rank) => [position, rank]));
    for (let v = 0; v < n; v++) if (lockCrew[v] === c) lockRank[v] = ranks.get(visits[v].locked!.position)!;
  }

  return {
    n,
    visits,
    point,
    colonies,
    service,
    earliest,
    latestStart,
    lockCrew,
    lockRank,
    crews,
    crewCount: crews.length,
    crewStart: Int32Array.from(crews, (c) => c.startIndex),
    crewEnd: Int32Array.from(crews, (c) => c.endIndex),
    workStart: Float64Array.from(crews, (c) => c.workStartMin * 60),
    workEnd: Float64Array.from(crews, (c) => c.workEndMin * 60),
    size,
    seconds,
    metres,
    unknownLockCrew,
    centigrams,
    maxColonies: Float64Array.from(crews, (c) => (c.maxColonies == null ? Infinity : Math.floor(c.maxColonies))),
    maxCentigrams: Float64Array.from(crews, (c) => (c.maxDoseGrams == null ? Infinity : gramsToCentigrams(c.maxDoseGrams))),
    hasLimits: crews.some((c) => c.maxColonies != null || c.maxDoseGrams != null),
  };
}
