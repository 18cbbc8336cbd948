import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import {
  attDistance,
  buildDistanceMatrix,
  euc2dDistance,
  geoDistance,
  geoRadians,
  parseOptima,
  parseTsplib,
  TSPLIB_GEO_PI,
  TSPLIB_GEO_RRR,
  type TsplibPoint,
} from "~/domain/planner/tsplib";
import { tourLength } from "~/domain/planner/tour";

const dir = join(import.meta.dirname, "..", "fixtures", "tsplib");
const read = (name: string): string => readFileSync(join(dir, name), "utf8");
const identity = (n: number): number[] => Array.from({ length: n }, (_, i) => i);

describe("TSPLIB parsing", () => {
  it("reads the header and coordinates of every fixture", () => {
    const expected: Record<string, [number, string]> = {
      burma14: [14, "GEO"],
      ulysses16: [16, "GEO"],
      ulysses22: [22, "GEO"],
      att48: [48, "ATT"],
      eil51: [51, "EUC_2D"],
      berlin52: [52, "EUC_2D"],
      st70: [70, "EUC_2D"],
      eil76: [76, "EUC_2D"],
      kroA100: [100, "EUC_2D"],
    };
    for (const [name, [dimension, type]] of Object.entries(expected)) {
      const instance = parseTsplib(read(`${name}.tsp`));
      expect(instance.name).toBe(name); // "ulysses16.tsp" in the file loses its suffix
      expect(instance.type).toBe("TSP");
      expect(instance.dimension).toBe(dimension);
      expect(instance.edgeWeightType).toBe(type);
      expect(instance.points).toHaveLength(dimension);
      for (const p of instance.points) {
        expect(Number.isFinite(p.x) && Number.isFinite(p.y)).toBe(true);
      }
    }
    // First and last nodes as written in the files.
    expect(parseTsplib(read("berlin52.tsp")).points[0]).toEqual({ x: 565, y: 575 });
    expect(parseTsplib(read("berlin52.tsp")).points[51]).toEqual({ x: 1740, y: 245 });
    expect(parseTsplib(read("burma14.tsp")).points[0]).toEqual({ x: 16.47, y: 96.1 });
    expect(parseTsplib(read("att48.tsp")).points[47]).toEqual({ x: 3023, y: 1942 });
  });

  it("accepts both 'KEY: value' and 'KEY : value', and nodes in any order", () => {
    const text = ["NAME : tiny", "TYPE: TSP", "DIMENSION : 3", "EDGE_WEIGHT_TYPE: EUC_2D", "NODE_COORD_SECTION", "3 6 0", "1 0 0", "2 3 4", "EOF"].join("\n");
    const instance = parseTsplib(text);
    expect(instance.points).toEqual([
      { x: 0, y: 0 },
      { x: 3, y: 4 },
      { x: 6, y: 0 },
    ]);
    expect(buildDistanceMatrix(instance)).toEqual([
      [0, 5, 6],
      [5, 0, 5],
      [6, 5, 0],
    ]);
  });

  it("refuses what it cannot read faithfully", () => {
    const base = ["NAME: x", "TYPE: TSP", "DIMENSION: 2", "EDGE_WEIGHT_TYPE: EUC_2D", "NODE_COORD_SECTION", "1 0 0", "2 1 1", "EOF"];
    expect(() => parseTsplib(base.join("\n").replace("EUC_2D", "EXPLICIT"))).toThrow(/not supported/);
    expect(() => parseTsplib(base.join("\n").replace("TYPE: TSP", "TYPE: ATSP"))).toThrow(/TYPE must be TSP/);
    expect(() => parseTsplib(base.filter((l) => !l.startsWith("2 ")).join("\n"))).toThrow(/node 2/);
    expect(() => parseTsplib(base.slice(0, 4).join("\n"))).toThrow(/NODE_COORD_SECTION/);
  });

  it("reads optima.txt with the values listed in sources.md", () => {
    // Source: TSPLIB95, Reinelt 1991, optima.txt (docs/sources.md, "TSPLIB").
    expect(Object.fromEntries(parseOptima(read("optima.txt")))).toEqual({
      burma14: 3323,
      ulysses16: 6859,
      ulysses22: 7013,
      att48: 10628,
      eil51: 426,
      berlin52: 7542,
      st70: 675,
      eil76: 538,
      kroA100: 21282,
    });
  });
});

describe("TSPLIB95 distance functions", () => {
  const p = (x: number, y: number): TsplibPoint => ({ x, y });

  it("EUC_2D is the Euclidean distance rounded to the nearest integer, halves up", () => {
    expect(euc2dDistance(p(0, 0), p(3, 4))).toBe(5);
    expect(euc2dDistance(p(0, 0), p(1, 1))).toBe(1); // √2 = 1.414…
    expect(euc2dDistance(p(0, 0), p(1.5, 2))).toBe(3); // exactly 2.5 → 3
    expect(euc2dDistance(p(0, 0), p(1.2, 1.6))).toBe(2); // exactly 2.0
  });

  it("ATT is pseudo-Euclidean and rounds up whenever nint(r) < r", () => {
    // r = √((10² + 0²)/10) = √10 = 3.162…, nint = 3 < r → 4
    expect(attDistance(p(0, 0), p(10, 0))).toBe(4);
    // r = √((10² + 30²)/10) = 10 exactly → 10
    expect(attDistance(p(0, 0), p(10, 30))).toBe(10);
    // r = √(50/10) = 2.236…, nint = 2 < r → 3
    expect(attDistance(p(0, 0), p(5, 5))).toBe(3);
  });

  it("GEO truncates the degrees (rounding them is the known pitfall)", () => {
    // 20.59 is 20° 59′: 20 + 5·0.59/3 = 20.98333° with TSPLIB's π = 3.141592.
    expect(geoRadians(20.59)).toBeCloseTo((3.141592 * (20 + (5 * 0.59) / 3)) / 180, 12);
    // Rounding would give deg = 21, min = −0.41 → 20.31667°, a different place.
    const roundedRadians = (x: number): number => {
      const deg = Math.round(x);
      return (TSPLIB_GEO_PI * (deg + (5 * (x - deg)) / 3)) / 180;
    };
    expect(geoRadians(20.59)).not.toBeCloseTo(roundedRadians(20.59), 3);
    expect(geoRadians(-20.59)).toBeCloseTo(-geoRadians(20.59), 12); // trunc is symmetric about 0

    // With rounded degrees the burma14 identity tour comes out 4659 instead of 4562.
    const roundedGeo = (a: TsplibPoint, b: TsplibPoint): number => {
      const q1 = Math.cos(roundedRadians(a.y) - roundedRadians(b.y));
      const q2 = Math.cos(roundedRadians(a.x) - roundedRadians(b.x));
      const q3 = Math.cos(roundedRadians(a.x) + roundedRadians(b.x));
      return Math.trunc(TSPLIB_GEO_RRR * Math.acos(0.5 * ((1 + q1) * q2 - (1 - q1) * q3)) + 1);
    };
    const burma = parseTsplib(read("burma14.tsp")).points;
    const closed = (d: (a: TsplibPoint, b: TsplibPoint) => number): number =>
      burma.reduce((sum, pt, i) => sum + d(pt, burma[(i + 1) % burma.length]), 0);
    expect(closed(geoDistance)).toBe(4562);
    expect(closed(roundedGeo)).toBe(4659);
    // ulysses16 nodes 1 → 2 (39.57 rounds to 40): 509 km truncating, 492 km rounding.
    const ulysses = parseTsplib(read("ulysses16.tsp")).points;
    expect(geoDistance(ulysses[0], ulysses[1])).toBe(509);
    expect(roundedGeo(ulysses[0], ulysses[1])).toBe(492);
  });

  it("builds symmetric integer matrices with a zero diagonal", () => {
    for (const name of ["burma14", "att48", "eil51"]) {
      const m = buildDistanceMatrix(parseTsplib(read(`${name}.tsp`)));
      m.forEach((row, i) =>
        row.forEach((d, j) => {
          expect(Number.isInteger(d)).toBe(true);
          expect(d).toBe(m[j][i]);
          if (i === j) expect(d).toBe(0);
        }),
      );
    }
  });

  it("reproduces the identity-tour regression values", () => {
    // Regression check values from sources.md (computed, not published): tour 1-2-…-n.
    const expected: Record<string, number> = { burma14: 4562, ulysses16: 9665, berlin52: 22205, kroA100: 191387 };
    for (const [name, length] of Object.entries(expected)) {
      const m = buildDistanceMatrix(parseTsplib(read(`${name}.tsp`)));
      expect(tourLength(m, identity(m.length))).toBe(length);
    }
  });
});
