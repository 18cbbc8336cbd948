/**
 * Great-circle geometry on a spherical Earth (haversine). Within about 0.5 % of the true
 * ellipsoidal (WGS84) distance, which is far finer than a road circuity factor.
 */

/** A point on the map, decimal degrees (WGS84). */
export interface LatLng {
  lat: number;
  lng: number;
}

/** Mean Earth radius R1 = (2a + b) / 3 of WGS84, km (IUGG). */
export const MEAN_EARTH_RADIUS_KM = 6371.0088;

const DEG = Math.PI / 180;

/** True when a point has a finite latitude in −90…90 and longitude in −180…180. */
export function isValidLatLng(point: LatLng): boolean {
  return (
    Number.isFinite(point.lat) &&
    Number.isFinite(point.lng) &&
    point.lat >= -90 &&
    point.lat <= 90 &&
    point.lng >= -180 &&
    point.lng <= 180
  );
}

function assertLatLng(point: LatLng): void {
  if (!isValidLatLng(point)) throw new RangeError(`not a valid map point: ${JSON.stringify(point)}`);
}

/**
 * Central angle between two points, radians (haversine formula).
 *
 * The haversine h = sin²(Δφ/2) + cos φ1 cos φ2 sin²(Δλ/2) is rewritten, with
 * cos φ1 cos φ2 = cos²(Σφ/2) − sin²(Δφ/2), as a sum of non-negative terms, and so is its
 * complement 1 − h; the angle 2·atan2(√h, √(1 − h)) then keeps full precision for every
 * pair, near-antipodal ones included (the plain form loses ~1e-8 rad there).
 */
export function centralAngleRadians(from: LatLng, to: LatLng): number {
  assertLatLng(from);
  assertLatLng(to);
  const halfDiffLat = ((to.lat - from.lat) * DEG) / 2;
  const halfSumLat = ((to.lat + from.lat) * DEG) / 2;
  const halfDiffLng = ((to.lng - from.lng) * DEG) / 2;
  const sinDiffLat2 = Math.sin(halfDiffLat) ** 2;
  const cosDiffLat2 = Math.cos(halfDiffLat) ** 2;
  const sinSumLat2 = Math.sin(halfSumLat) ** 2;
  const cosSumLat2 = Math.cos(halfSumLat) ** 2;
  const sinLng2 = Math.sin(halfDiffLng) ** 2;
  const cosLng2 = Math.cos(halfDiffLng) ** 2;
  const h = sinDiffLat2 * cosLng2 + cosSumLat2 * sinLng2;
  const complement = cosDiffLat2 * cosLng2 + sinSumLat2 * sinLng2;
  return 2 * Math.atan2(Math.sqrt(h), Math.sqrt(complement));
}

/** Great-circle distance in kilometres on a sphere of the given radius (km). */
export function haversineKilometres(from: LatLng, to: LatLng, radiusKm: number = MEAN_EARTH_RADIUS_KM): number {
  if (!Number.isFinite(radiusKm) || radiusKm <= 0) throw new RangeError(`radius must be more than 0 km, got ${radiusKm}`);
  return centralAngleRadians(from, to) * radiusKm;
}

/** Great-circle distance in metres on a sphere of the given radius (km). */
export function haversineMetres(from: LatLng, to: LatLng, radiusKm: number = MEAN_EARTH_RADIUS_KM): number {
  return haversineKilometres(from, to, radiusKm) * 1000;
}

/** Initial bearing from one point towards another, degrees clockwise from true north, 0 ≤ b < 360. */
export function initialBearingDegrees(from: LatLng, to: LatLng): number {
  assertLatLng(from);
  assertLatLng(to);
  const phi1 = from.lat * DEG;
  const phi2 = to.lat * DEG;
  const dLambda = (to.lng - from.lng) * DEG;
  const y = Math.sin(dLambda) * Math.cos(phi2);
  const x = Math.cos(phi1) * Math.sin(phi2) - Math.sin(phi1) * Math.cos(phi2) * Math.cos(dLambda);
  const degrees = Math.atan2(y, x) / DEG;
  const normalised = (degrees + 360) % 360;
  return normalised === 360 ? 0 : normalised;
}
