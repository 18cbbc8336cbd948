/**
 * Varroute's route planner (pure: no I/O).
 *
 * - planDay / recomputeTimes: crew-days with windows, working hours and locked stops.
 * - solveTour / nearestNeighbourTour: symmetric TSP tours on a distance matrix.
 * - TSPLIB parsing and distances, and pure tour mode, for checks against published optima.
 */

export { clockTime, DEFAULT_EXACT_MAX_VISITS, planDay, recomputeTimes } from "./day";
export { EXACT_DAY_HARD_LIMIT, EXACT_ROUTE_MAX } from "./exact";
export { createRandom, type Random } from "./random";
export {
  DEFAULT_EXACT_MAX_NODES,
  type DistanceMatrix,
  isPermutation,
  nearestNeighbourTour,
  solveTour,
  type TourOptions,
  type TourResult,
  tourLength,
} from "./tour";
export { planMatrixTour, planTsplibTour, type TourModeResult } from "./tour-mode";
export {
  attDistance,
  buildDistanceMatrix,
  euc2dDistance,
  geoDistance,
  geoRadians,
  parseOptima,
  parseTsplib,
  type TsplibInstance,
  type TsplibPoint,
} from "./tsplib";
export type * from "./types";
