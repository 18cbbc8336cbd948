import { readFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { heldKarpOrder } from "~/domain/planner/held-karp";
import { createRandom } from "~/domain/planner/random";
import { isPermutation, nearestNeighbourTour, solveTour, type TourResult, tourLength } from "~/domain/planner/tour";
import { planMatrixTour } from "~/domain/planner/tour-mode";
import { buildDistanceMatrix, parseOptima, parseTsplib } from "~/domain/planner/tsplib";

const dir = join(import.meta.dirname, "..", "fixtures", "tsplib");
// Source: TSPLIB95, Reinelt 1991, optima.txt (proven optimal tour lengths; confidence H).
const optima = parseOptima(readFileSync(join(dir, "optima.txt"), "utf8"));
const instances = [...optima.keys()].map((name) => {
  const instance = parseTsplib(readFileSync(join(dir, `${name}.tsp`), "utf8"));
  return { name, optimum: optima.get(name)!, matrix: buildDistanceMatrix(instance) };
});
const gap = (length: number, optimum: number): number => (length - optimum) / optimum;

// Solved once per instance, on first use (tests run in order within this file).
const solved = new Map<string, TourResult>();
const solve = (name: string): TourResult => {
  if (!solved.has(name)) solved.set(name, solveTour(instances.find((i) => i.name === name)!.matrix, { seed: 1 }));
  return solved.get(name)!;
};

describe("solveTour on the nine TSPLIB instances", () => {
  it.each(instances.map((i) => i.name))("%s: a valid tour within 1 %% of the optimum", (name) => {
    const { optimum, matrix } = instances.find((i) => i.name === name)!;
    const result = solve(name);
    expect(isPermutation(result.tour, matrix.length)).toBe(true);
    expect(result.tour[0]).toBe(0);
    expect(result.length).toBe(tourLength(matrix, result.tour));
    expect(result.length).toBeGreaterThanOrEqual(optimum); // never below a proven optimum
    expect(gap(result.length, optimum)).toBeLessThanOrEqual(0.01);
  });

  it("has a mean gap of at most 0.5 %", () => {
    const mean = instances.reduce((sum, i) => sum + gap(solve(i.name).length, i.optimum), 0) / instances.length;
    expect(mean).toBeLessThanOrEqual(0.005);
  });

  it("is exactly optimal on burma14 and ulysses16 (Held–Karp up to 16 nodes)", () => {
    expect(solve("burma14")).toMatchObject({ length: 3323, method: "exact" });
    expect(solve("ulysses16")).toMatchObject({ length: 6859, method: "exact" });
  });

  it("finds those optima with the heuristic alone too", () => {
    for (const [name, optimum] of [
      ["burma14", 3323],
      ["ulysses16", 6859],
    ] as const) {
      const matrix = instances.find((i) => i.name === name)!.matrix;
      const result = solveTour(matrix, { seed: 1, exactMaxNodes: 3 });
      expect(result.method).toBe("heuristic");
      expect(result.length).toBe(optimum);
    }
  });
});

describe("day planner in pure tour mode on the TSPLIB instances", () => {
  // One crew from node 1 and back, every other node a visit, no windows, no service time.
  it("serves every node within 1 % of the optimum, mean gap ≤ 0.5 %", () => {
    const results = instances.map(({ name, optimum, matrix }) => ({ name, optimum, matrix, result: planMatrixTour(matrix, 1) }));
    for (const { name, optimum, matrix, result } of results) {
      expect(isPermutation(result.tour, matrix.length), name).toBe(true);
      expect(result.length, name).toBe(tourLength(matrix, result.tour));
      expect(gap(result.length, optimum), name).toBeLessThanOrEqual(0.01);
    }
    const mean = results.reduce((sum, r) => sum + gap(r.result.length, r.optimum), 0) / results.length;
    expect(mean).toBeLessThanOrEqual(0.005);
    expect(results.find((r) => r.name === "burma14")!.result.length).toBe(3323);
    expect(results.find((r) => r.name === "ulysses16")!.result.length).toBe(6859);
  });
});

describe("tour solver mechanics", () => {
  const randomMatrix = (n: number, seed: number): number[][] => {
    const random = createRandom(seed);
    const pts = Array.from({ length: n }, () => [random.int(1000), random.int(1000)]);
    return pts.map((a) => pts.map((b) => Math.round(Math.hypot(a[0] - b[0], a[1] - b[1]))));
  };
  const bruteForce = (m: number[][]): number => {
    const n = m.length;
    let best = Infinity;
    const rest = Array.from({ length: n - 1 }, (_, i) => i + 1);
    const permute = (k: number): void => {
      if (k === rest.length) {
        best = Math.min(best, tourLength(m, [0, ...rest]));
        return;
      }
      for (let i = k; i < rest.length; i++) {
        [rest[k], rest[i]] = [rest[i], rest[k]];
        permute(k + 1);
        [rest[k], rest[i]] = [rest[i], rest[k]];
      }
    };
    permute(0);
    return best;
  };

  it("Held–Karp matches brute force on small random instances (asymmetric too)", () => {
    for (let seed = 1; seed <= 12; seed++) {
      const n = 4 + (seed % 5);
      const m = randomMatrix(n, seed);
      if (seed % 2 === 0) m.forEach((row, i) => row.forEach((_, j) => (row[j] += i < j ? 7 * ((i + j) % 3) : 0)));
      const flat = Float64Array.from(m.flat());
      const order = heldKarpOrder(n, flat);
      expect(isPermutation(order, n)).toBe(true);
      expect(tourLength(m, order)).toBe(bruteForce(m));
    }
  });

  it("is deterministic: same matrix and seed, same tour", () => {
    const m = randomMatrix(60, 7);
    expect(solveTour(m, { seed: 3 })).toEqual(solveTour(m, { seed: 3 }));
  });

  it("handles the trivial sizes", () => {
    expect(solveTour([])).toEqual({ tour: [], length: 0, method: "trivial" });
    expect(solveTour([[0]])).toEqual({ tour: [0], length: 0, method: "trivial" });
    expect(solveTour([
      [0, 2],
      [2, 0],
    ]).length).toBe(4);
    expect(() => solveTour([[0, 1], [1]])).toThrow(/square/);
  });

  it("the nearest-neighbour baseline is a valid tour no shorter than the optimum", () => {
    for (const { matrix, optimum } of instances) {
      const nn = nearestNeighbourTour(matrix);
      expect(isPermutation(nn.tour, matrix.length)).toBe(true);
      expect(nn.length).toBe(tourLength(matrix, nn.tour));
      expect(nn.length).toBeGreaterThanOrEqual(optimum);
    }
  });
});
