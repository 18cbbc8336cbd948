/**
 * Pure tour mode: a whole TSPLIB instance as one crew-day of the day planner.
 *
 * Node 1 is the crew's start and end point; every other node is a visit of one colony with
 * no service time and a window spanning the whole (unbounded) day, so nothing can be
 * deferred and the plan is the planner's shortest round trip. Used by scripts/tour.ts and
 * the route benchmark; the distance matrix serves as both seconds and metres.
 */

import { planDay } from "./day";
import { buildDistanceMatrix, type TsplibInstance } from "./tsplib";
import type { PlanVisit } from "./types";

export interface TourModeResult {
  /** Node order starting at node index 0 (TSPLIB node 1). */
  tour: number[];
  length: number;
}

export function planMatrixTour(matrix: number[][], seed = 1): TourModeResult {
  const n = matrix.length;
  if (n === 0) return { tour: [], length: 0 };
  let total = 0;
  for (const row of matrix) for (const d of row) total += d;
  const dayEnd = total / 60 + 1; // minutes: longer than any tour
  const visits: PlanVisit[] = [];
  for (let i = 1; i < n; i++) {
    visits.push({
      id: String(i),
      pointIndex: i,
      colonies: 1,
      serviceMinutes: 0,
      window: { startMin: 0, endMin: dayEnd },
      bookedAt: "2000-01-01T00:00:00Z",
    });
  }
  const plan = planDay({
    visits,
    crews: [{ id: "tour", startIndex: 0, endIndex: 0, workStartMin: 0, workEndMin: dayEnd }],
    matrix: { seconds: matrix, metres: matrix },
    options: { seed },
  });
  if (plan.deferred.length > 0) throw new Error("tour mode: the planner deferred a visit");
  const tour = [0, ...plan.runs[0].stops.map((s) => s.pointIndex)];
  return { tour, length: plan.runs[0].driveMetres };
}

export function planTsplibTour(instance: TsplibInstance, seed = 1): TourModeResult {
  return planMatrixTour(buildDistanceMatrix(instance), seed);
}

