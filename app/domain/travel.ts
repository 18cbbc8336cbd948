/**
 * Drive distance and time between points. Without a routing engine, a drive is estimated
 * as the great-circle distance times a road circuity factor (about 1.2 in the USA), driven
 * at an average speed (about 60 km/h ≈ 37 mph on rural trips). A routing engine's
 * travel-time table can stand in through the same `TravelProvider` interface.
 *
 * Estimates are whole metres and whole seconds, so matrices are exact integers that a
 * route planner can add up without drift.
 */

import { haversineMetres, type LatLng } from "./geo";

export type { LatLng } from "./geo";

/** How a drive is estimated from a straight line. */
export interface DriveEstimateOptions {
  /** Road distance ÷ great-circle distance (≥ 1). */
  circuityFactor: number;
  /** Average driving speed, km/h (> 0). */
  averageSpeedKmh: number;
}

/** Drive seconds and metres between every pair of points; row = from, column = to. */
export interface TravelMatrix {
  seconds: number[][];
  metres: number[][];
}

/** Something that can give a travel matrix: the estimate here, or a routing engine. */
export interface TravelProvider {
  name: string;
  matrix(points: LatLng[]): Promise<TravelMatrix>;
}

function assertCircuity(circuityFactor: number): void {
  if (!Number.isFinite(circuityFactor) || circuityFactor < 1) {
    throw new RangeError(`circuity factor must be a number ≥ 1, got ${circuityFactor}`);
  }
}

function assertSpeed(averageSpeedKmh: number): void {
  if (!Number.isFinite(averageSpeedKmh) || averageSpeedKmh <= 0) {
    throw new RangeError(`average speed must be more than 0 km/h, got ${averageSpeedKmh}`);
  }
}

/** Estimated road distance, whole metres: great-circle distance × circuity factor. */
export function estimateDriveMetres(from: LatLng, to: LatLng, options: Pick<DriveEstimateOptions, "circuityFactor">): number {
  assertCircuity(options.circuityFactor);
  return Math.round(haversineMetres(from, to) * options.circuityFactor);
}

/** Seconds to drive a road distance at an average speed, whole seconds. */
export function driveSecondsForMetres(metres: number, averageSpeedKmh: number): number {
  assertSpeed(averageSpeedKmh);
  if (!Number.isFinite(metres) || metres < 0) throw new RangeError(`metres must be ≥ 0, got ${metres}`);
  return Math.round((metres * 3.6) / averageSpeedKmh);
}

/** Estimated drive time, whole seconds: estimated road metres at the average speed. */
export function estimateDriveSeconds(from: LatLng, to: LatLng, options: DriveEstimateOptions): number {
  assertSpeed(options.averageSpeedKmh);
  return driveSecondsForMetres(estimateDriveMetres(from, to, options), options.averageSpeedKmh);
}

/** The estimated travel matrix of a list of points: symmetric, with a zero diagonal. */
export function travelMatrix(points: readonly LatLng[], options: DriveEstimateOptions): TravelMatrix {
  assertCircuity(options.circuityFactor);
  assertSpeed(options.averageSpeedKmh);
  const n = points.length;
  const metres = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  const seconds = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const m = estimateDriveMetres(points[i], points[j], options);
      const s = driveSecondsForMetres(m, options.averageSpeedKmh);
      metres[i][j] = metres[j][i] = m;
      seconds[i][j] = seconds[j][i] = s;
    }
  }
  return { seconds, metres };
}

/** A travel provider that estimates from straight lines (no network; resolves at once). */
export function estimateProvider(options: DriveEstimateOptions): TravelProvider {
  assertCircuity(options.circuityFactor);
  assertSpeed(options.averageSpeedKmh);
  return {
    name: "estimate",
    matrix: (points) => new Promise<TravelMatrix>((resolve) => resolve(travelMatrix(points, options))),
  };
}
