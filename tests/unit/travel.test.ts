import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { haversineMetres } from "~/domain/geo";
import {
  driveSecondsForMetres,
  estimateDriveMetres,
  estimateDriveSeconds,
  estimateProvider,
  travelMatrix,
  type LatLng,
} from "~/domain/travel";

// Options from sources.md: circuity 1.2 (Ballou et al. 2002, from memory), 60 km/h ≈ 37 mph (Pew 2018).
const OPTIONS = { circuityFactor: 1.2, averageSpeedKmh: 60 };
// Points written for these tests along the 0° meridian and the equator (not demo data).
const ORIGIN = { lat: 0, lng: 0 };
const ONE_DEGREE_NORTH = { lat: 1, lng: 0 };
const ONE_DEGREE_METRES = (Math.PI / 180) * 6_371_008.8;

const point = fc.record({
  lat: fc.double({ min: -60, max: 60, noNaN: true }),
  lng: fc.double({ min: -170, max: 170, noNaN: true }),
});

describe("estimated drives", () => {
  it("multiplies the great-circle distance by the circuity factor, in whole metres", () => {
    // Source: circuity about 1.2 in the USA (Ballou et al. 2002, Transp. Res. A 36:843–848, from memory).
    expect(estimateDriveMetres(ORIGIN, ONE_DEGREE_NORTH, OPTIONS)).toBe(Math.round(ONE_DEGREE_METRES * 1.2));
    expect(estimateDriveMetres(ORIGIN, ONE_DEGREE_NORTH, { circuityFactor: 1 })).toBe(Math.round(ONE_DEGREE_METRES));
    expect(estimateDriveMetres(ORIGIN, ORIGIN, OPTIONS)).toBe(0);
  });

  it("drives 60 km in an hour at 60 km/h", () => {
    expect(driveSecondsForMetres(60_000, 60)).toBe(3600);
    expect(driveSecondsForMetres(0, 60)).toBe(0);
  });

  it("reproduces the rural trip of 10.5 miles in 17 minutes", () => {
    // Source: Pew Research Center analysis, 2018: 10.5 mi in 17 min (≈ 37 mph) to the nearest hospital.
    const metres = 10.5 * 1609.344;
    const kmh = (10.5 * 1.609344) / (17 / 60);
    expect(driveSecondsForMetres(metres, kmh)).toBe(17 * 60);
  });

  it("times a drive from its estimated metres", () => {
    const metres = Math.round(ONE_DEGREE_METRES * 1.2);
    expect(estimateDriveSeconds(ORIGIN, ONE_DEGREE_NORTH, OPTIONS)).toBe(Math.round(metres / (60 / 3.6)));
  });

  it("refuses impossible options", () => {
    expect(() => estimateDriveMetres(ORIGIN, ONE_DEGREE_NORTH, { circuityFactor: 0.9 })).toThrow(RangeError);
    expect(() => estimateDriveSeconds(ORIGIN, ONE_DEGREE_NORTH, { circuityFactor: 1.2, averageSpeedKmh: 0 })).toThrow(RangeError);
    expect(() => driveSecondsForMetres(-1, 60)).toThrow(RangeError);
  });
});

describe("travelMatrix", () => {
  const points: LatLng[] = [ORIGIN, ONE_DEGREE_NORTH, { lat: 0, lng: 1 }, { lat: -0.5, lng: 0.25 }];

  it("is square, symmetric, with a zero diagonal, and holds the drives worked out by hand", () => {
    const { metres, seconds } = travelMatrix(points, OPTIONS);
    // Central angle c from cos c = sin φ1 sin φ2 + cos φ1 cos φ2 cos Δλ (spherical law of
    // cosines), on R = 6 371 008.8 m (mean radius R1 of WGS84, IUGG, from memory); road = R·c ×
    // 1.2 (circuity, from memory), rounded; seconds = metres × 3.6 / 60 (60 km/h).
    //   0°,0° ↔ 1°N:          c = 1°         → 111 195.08 m × 1.2 = 133 434.10 → 133 434 m, 8 006.04 → 8 006 s
    //   0°,0° ↔ 1°E:          c = 1°         → 133 434 m, 8 006 s
    //   0°,0° ↔ 0.5°S 0.25°E: c = 0.559016°  →  62 159.78 m × 1.2 =  74 591.74 →  74 592 m, 4 475.52 → 4 476 s
    //   1°N ↔ 1°E:            cos c = cos²1° → c = 1.414178° → 157 249.60 m × 1.2 = 188 699.52 → 188 700 m, 11 322 s
    //   1°N ↔ 0.5°S 0.25°E:   c = 1.520689°  → 169 093.14 m × 1.2 = 202 911.77 → 202 912 m, 12 174.72 → 12 175 s
    //   1°E ↔ 0.5°S 0.25°E:   c = 0.901380°  → 100 229.01 m × 1.2 = 120 274.81 → 120 275 m, 7 216.5 → 7 217 s (half up)
    expect(metres).toEqual([
      [0, 133_434, 133_434, 74_592],
      [133_434, 0, 188_700, 202_912],
      [133_434, 188_700, 0, 120_275],
      [74_592, 202_912, 120_275, 0],
    ]);
    expect(seconds).toEqual([
      [0, 8_006, 8_006, 4_476],
      [8_006, 0, 11_322, 12_175],
      [8_006, 11_322, 0, 7_217],
      [4_476, 12_175, 7_217, 0],
    ]);
  });

  it("handles no points and one point", () => {
    expect(travelMatrix([], OPTIONS)).toEqual({ seconds: [], metres: [] });
    expect(travelMatrix([ORIGIN], OPTIONS)).toEqual({ seconds: [[0]], metres: [[0]] });
  });

  it("keeps symmetry and the triangle inequality within rounding", () => {
    fc.assert(
      fc.property(fc.array(point, { minLength: 3, maxLength: 6 }), (pts) => {
        const { metres, seconds } = travelMatrix(pts, OPTIONS);
        const n = pts.length;
        for (let i = 0; i < n; i++) {
          for (let j = 0; j < n; j++) {
            expect(metres[i][j]).toBe(metres[j][i]);
            expect(Number.isInteger(metres[i][j]) && Number.isInteger(seconds[i][j])).toBe(true);
            for (let k = 0; k < n; k++) {
              // each entry is rounded by at most 0.5 m (0.5 s), plus the seconds' own rounding
              expect(metres[i][k]).toBeLessThanOrEqual(metres[i][j] + metres[j][k] + 1.5);
              expect(seconds[i][k]).toBeLessThanOrEqual(seconds[i][j] + seconds[j][k] + 2);
            }
          }
        }
      }),
      { numRuns: 50 },
    );
  });

  it("never estimates a drive shorter than the straight line", () => {
    fc.assert(
      fc.property(point, point, (a, b) => {
        expect(estimateDriveMetres(a, b, OPTIONS)).toBeGreaterThanOrEqual(Math.floor(haversineMetres(a, b)));
      }),
    );
  });
});

describe("estimateProvider", () => {
  it("implements TravelProvider with the estimate", async () => {
    const provider = estimateProvider(OPTIONS);
    expect(provider.name).toBe("estimate");
    const points = [ORIGIN, ONE_DEGREE_NORTH];
    // 1° of the meridian: 111 195.08 m × 1.2 = 133 434 m; 133 434 × 3.6 / 60 = 8 006.04 → 8 006 s.
    await expect(provider.matrix(points)).resolves.toEqual({
      seconds: [[0, 8_006], [8_006, 0]],
      metres: [[0, 133_434], [133_434, 0]],
    });
  });

  it("rejects rather than throws on a bad point", async () => {
    const provider = estimateProvider(OPTIONS);
    let promise: Promise<unknown> | undefined;
    expect(() => {
      promise = provider.matrix([ORIGIN, { lat: 95, lng: 0 }]);
    }).not.toThrow();
    await expect(promise).rejects.toThrow(RangeError);
  });

  it("refuses impossible options up front", () => {
    expect(() => estimateProvider({ circuityFactor: 1.2, averageSpeedKmh: -5 })).toThrow(RangeError);
  });
});
