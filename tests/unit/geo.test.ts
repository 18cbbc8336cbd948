import fc from "fast-check";
import geodesic from "geographiclib-geodesic";
import { describe, expect, it } from "vitest";
import {
  MEAN_EARTH_RADIUS_KM,
  centralAngleRadians,
  haversineKilometres,
  haversineMetres,
  initialBearingDegrees,
  isValidLatLng,
  type LatLng,
} from "~/domain/geo";

// geographiclib-geodesic is CommonJS: its module object arrives as the default import.
const WGS84 = geodesic.Geodesic.WGS84;
const geodesicMetres = (a: LatLng, b: LatLng) => WGS84.Inverse(a.lat, a.lng, b.lat, b.lng).s12 as number;
const dms = (d: number, m: number, s: number) => d + m / 60 + s / 3600;

/** Small seeded generator (mulberry32) so the 1,000 pairs are the same on every run. */
function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const point = fc.record({
  lat: fc.double({ min: -90, max: 90, noNaN: true }),
  lng: fc.double({ min: -180, max: 180, noNaN: true }),
});

describe("haversine", () => {
  const BNA = { lat: 36.12, lng: -86.67 };
  const LAX = { lat: 33.94, lng: -118.4 };

  it("matches Rosetta Code's BNA → LAX with R = 6372.8 km", () => {
    // Source: Rosetta Code, "Haversine formula": 2887.2599506 km with R = 6372.8 km.
    expect(Math.abs(haversineKilometres(BNA, LAX, 6372.8) - 2887.2599506)).toBeLessThan(1e-6);
  });

  it("matches Rosetta Code's BNA → LAX with R = 6371.0 km", () => {
    // Source: Rosetta Code, "Haversine formula": 2886.4444428 km with R = 6371.0 km.
    expect(Math.abs(haversineKilometres(BNA, LAX, 6371.0) - 2886.4444428)).toBeLessThan(1e-6);
  });

  it("uses the mean Earth radius 6371.0088 km by default, in metres", () => {
    // Source: IUGG mean radius R1 = (2a + b) / 3 of WGS84 = 6371.0088 km (from memory).
    expect(MEAN_EARTH_RADIUS_KM).toBe(6371.0088);
    const a = { lat: 0, lng: 0 };
    const b = { lat: 0, lng: 1 };
    expect(haversineMetres(a, b)).toBeCloseTo((2 * Math.PI * 6_371_008.8) / 360, 6);
    expect(haversineMetres(BNA, LAX)).toBeCloseTo(haversineKilometres(BNA, LAX, 6371.0088) * 1000, 6);
  });

  it("gives 0 for the same point and half the circumference for antipodes", () => {
    expect(haversineMetres(BNA, BNA)).toBe(0);
    expect(haversineKilometres({ lat: 90, lng: 0 }, { lat: -90, lng: 0 }, 1)).toBeCloseTo(Math.PI, 12);
    // The plain haversine loses ~1e-8 rad near antipodes (1 − h cancels); the stable form does not.
    expect(centralAngleRadians({ lat: 10, lng: 20 }, { lat: -10, lng: -160 })).toBeCloseTo(Math.PI, 12);
    expect(centralAngleRadians({ lat: 0, lng: 0 }, { lat: 0, lng: 179.99999879258175 })).toBeCloseTo(
      ((179.99999879258175 / 180) * Math.PI),
      13,
    );
  });

  it("rejects points off the map and bad radii", () => {
    expect(isValidLatLng({ lat: 91, lng: 0 })).toBe(false);
    expect(isValidLatLng({ lat: 0, lng: -180.5 })).toBe(false);
    expect(isValidLatLng({ lat: Number.NaN, lng: 0 })).toBe(false);
    expect(isValidLatLng({ lat: -90, lng: 180 })).toBe(true);
    expect(() => haversineMetres({ lat: 100, lng: 0 }, BNA)).toThrow(RangeError);
    expect(() => haversineKilometres(BNA, LAX, 0)).toThrow(RangeError);
  });

  it("is symmetric", () => {
    fc.assert(
      fc.property(point, point, (a, b) => {
        expect(haversineMetres(a, b)).toBe(haversineMetres(b, a));
      }),
    );
  });

  it("keeps the triangle inequality (within 1 mm)", () => {
    fc.assert(
      fc.property(point, point, point, (a, b, c) => {
        expect(haversineMetres(a, c)).toBeLessThanOrEqual(haversineMetres(a, b) + haversineMetres(b, c) + 1e-3);
      }),
    );
  });
});

describe("against GeographicLib (WGS84 geodesics)", () => {
  it("reproduces the published Wellington → Salamanca geodesic", () => {
    // Source: GeographicLib documentation (Karney): 19 959 679.267 m.
    const s = geodesicMetres({ lat: -41.32, lng: 174.81 }, { lat: 40.96, lng: -5.5 });
    expect(Math.abs(s - 19_959_679.267)).toBeLessThan(0.001);
  });

  it("reproduces the published JFK → Singapore geodesic", () => {
    // Source: GeographicLib GeodSolve manual: 15 347 628 m (to the metre).
    const jfk = { lat: dms(40, 38, 23), lng: -dms(73, 46, 44) };
    const sin = { lat: dms(1, 21, 33), lng: dms(103, 59, 22) };
    expect(Math.round(geodesicMetres(jfk, sin))).toBe(15_347_628);
  });

  it("stays within the sphere's worst case, and within 0.5 % for nearly all of 1,000 random pairs", () => {
    // Source: Karney 2013, J. Geodesy 87:43–55; sources.md: haversine within about 0.5 % of the geodesic.
    // The exact worst case of a sphere of radius R1 is a short north–south step at the equator,
    // where the ellipsoid's meridian radius is a(1 − e²): R1 / (a(1 − e²)) − 1 ≈ 0.56 %. So the
    // check is every pair within that bound and at least 99 % within 0.5 %.
    const { a, f } = geodesic.Constants.WGS84;
    const e2 = f * (2 - f);
    const worstCase = (MEAN_EARTH_RADIUS_KM * 1000) / (a * (1 - e2)) - 1;
    expect(worstCase).toBeGreaterThan(0.005);
    expect(worstCase).toBeLessThan(0.0057);

    const random = seededRandom(20261201);
    const randomPoint = (): LatLng => ({
      lat: (Math.asin(2 * random() - 1) * 180) / Math.PI, // uniform over the sphere's area
      lng: random() * 360 - 180,
    });
    let within = 0;
    const pairs = 1000;
    for (let i = 0; i < pairs; i++) {
      const p = randomPoint();
      const q = randomPoint();
      const g = geodesicMetres(p, q);
      if (g < 1) continue;
      const relative = Math.abs(haversineMetres(p, q) - g) / g;
      expect(relative).toBeLessThanOrEqual(worstCase + 1e-9);
      if (relative <= 0.005) within++;
    }
    expect(within / pairs).toBeGreaterThanOrEqual(0.99);
  });

  it("stays within the same bound for yard-to-yard hops of up to 100 km", () => {
    const { a, f } = geodesic.Constants.WGS84;
    const worstCase = (MEAN_EARTH_RADIUS_KM * 1000) / (a * (1 - f * (2 - f))) - 1;
    const random = seededRandom(7);
    for (let i = 0; i < 1000; i++) {
      const p = { lat: random() * 120 - 60, lng: random() * 340 - 170 };
      const q = { lat: p.lat + (random() - 0.5) * 1.2, lng: p.lng + (random() - 0.5) * 1.2 };
      const g = geodesicMetres(p, q);
      if (g < 1) continue;
      expect(Math.abs(haversineMetres(p, q) - g) / g).toBeLessThanOrEqual(worstCase + 1e-9);
    }
  });
});

describe("initialBearingDegrees", () => {
  it("points along the compass", () => {
    expect(initialBearingDegrees({ lat: 0, lng: 0 }, { lat: 10, lng: 0 })).toBeCloseTo(0, 10);
    expect(initialBearingDegrees({ lat: 0, lng: 0 }, { lat: 0, lng: 10 })).toBeCloseTo(90, 10);
    expect(initialBearingDegrees({ lat: 0, lng: 0 }, { lat: -10, lng: 0 })).toBeCloseTo(180, 10);
    expect(initialBearingDegrees({ lat: 0, lng: 0 }, { lat: 0, lng: -10 })).toBeCloseTo(270, 10);
  });

  it("agrees with GeographicLib's azimuth to within a degree at mid latitudes", () => {
    // GeographicLib's azi1 is the ellipsoidal azimuth; a sphere differs by a fraction of a degree.
    const from = { lat: 36.12, lng: -86.67 };
    const to = { lat: 33.94, lng: -118.4 };
    const azi = WGS84.Inverse(from.lat, from.lng, to.lat, to.lng).azi1 as number;
    expect(Math.abs(initialBearingDegrees(from, to) - ((azi + 360) % 360))).toBeLessThan(1);
  });

  it("always lies in 0 ≤ b < 360", () => {
    fc.assert(
      fc.property(point, point, (a, b) => {
        const bearing = initialBearingDegrees(a, b);
        expect(bearing).toBeGreaterThanOrEqual(0);
        expect(bearing).toBeLessThan(360);
      }),
    );
  });
});
