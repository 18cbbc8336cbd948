import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { planDay } from "~/domain/planner/day";
import { createRandom } from "~/domain/planner/random";
import type { DayPlan, PlanCrew, PlanDayInput, PlanVisit, TravelMatrix } from "~/domain/planner/types";

// Optimality of the day planner, checked against brute force written independently here.

const EPS = 1e-6;

/** Drive seconds of a route leaving at workStart, or null if a window or the day is broken. */
function routeDrive(crew: PlanCrew, route: readonly PlanVisit[], matrix: TravelMatrix): number | null {
  if (route.length === 0) return 0;
  let t = crew.workStartMin;
  let at = crew.startIndex;
  let drive = 0;
  for (const v of route) {
    drive += matrix.seconds[at][v.pointIndex];
    t = Math.max(t + matrix.seconds[at][v.pointIndex] / 60, v.window.startMin) + v.serviceMinutes;
    if (t > v.window.endMin + EPS) return null;
    at = v.pointIndex;
  }
  drive += matrix.seconds[at][crew.endIndex];
  return t + matrix.seconds[at][crew.endIndex] / 60 <= crew.workEndMin + EPS ? drive : null;
}

function permutations<T>(items: readonly T[]): T[][] {
  if (items.length <= 1) return [[...items]];
  return items.flatMap((item, i) => permutations([...items.slice(0, i), ...items.slice(i + 1)]).map((rest) => [item, ...rest]));
}

/** Least drive over every order of these visits for the crew (Infinity if none is on time). */
function bestOrderDrive(crew: PlanCrew, visits: readonly PlanVisit[], matrix: TravelMatrix): number {
  let best = Infinity;
  for (const order of permutations(visits)) {
    const drive = routeDrive(crew, order, matrix);
    if (drive !== null && drive < best) best = drive;
  }
  return best;
}

/** Brute force over every assignment of visits to crews or to "deferred": most colonies, then least drive. */
function bruteForce(input: PlanDayInput): { colonies: number; drive: number } {
  const { visits, crews, matrix } = input;
  const memo = new Map<string, number>();
  const crewDrive = (c: number, mask: number): number => {
    const key = `${c}:${mask}`;
    if (!memo.has(key)) memo.set(key, bestOrderDrive(crews[c], visits.filter((_, i) => mask & (1 << i)), matrix));
    return memo.get(key)!;
  };
  let best = { colonies: -1, drive: Infinity };
  const choice = new Array<number>(visits.length).fill(-1);
  const walk = (i: number): void => {
    if (i === visits.length) {
      let colonies = 0;
      let drive = 0;
      for (let c = 0; c < crews.length; c++) {
        let mask = 0;
        choice.forEach((owner, k) => {
          if (owner === c) mask |= 1 << k;
        });
        const d = crewDrive(c, mask);
        if (d === Infinity) return;
        drive += d;
      }
      choice.forEach((owner, k) => {
        if (owner >= 0) colonies += visits[k].colonies;
      });
      if (colonies > best.colonies || (colonies === best.colonies && drive < best.drive - EPS)) best = { colonies, drive };
      return;
    }
    for (let owner = -1; owner < crews.length; owner++) {
      choice[i] = owner;
      walk(i + 1);
    }
  };
  walk(0);
  return best;
}

/** Random tiny-to-medium days from a seed: yards within ~25 km, windows all day / AM / PM / slots. */
function seededDay(seed: number, visitCount: number, crewCount: number, sharedDepot: boolean): PlanDayInput {
  const random = createRandom(seed);
  const size = visitCount + 3;
  const points = Array.from({ length: size }, () => [random.int(25_000), random.int(25_000)]);
  const metres = points.map((a) => points.map((b) => Math.round(1.3 * Math.hypot(a[0] - b[0], a[1] - b[1]))));
  const seconds = metres.map((row, i) => row.map((m, j) => Math.round((m / 13.9) * (i < j ? 1.05 : 1))));
  const windows = [
    [480, 1020],
    [480, 720],
    [720, 1020],
  ];
  const visits: PlanVisit[] = Array.from({ length: visitCount }, (_, k) => {
    const slot = random.int(4);
    const open = 480 + 30 * random.int(14);
    const window = slot < 3 ? windows[slot] : [open, open + 90 + 30 * random.int(6)];
    return {
      id: `v${k}`,
      pointIndex: 3 + k,
      colonies: 1 + random.int(24),
      serviceMinutes: 20 + 5 * random.int(13),
      window: { startMin: window[0], endMin: window[1] },
      bookedAt: `2025-09-0${1 + random.int(5)}T1${random.int(10)}:00:00Z`,
    };
  });
  const crews: PlanCrew[] = Array.from({ length: crewCount }, (_, c) => ({
    id: `crew${c}`,
    startIndex: sharedDepot ? 0 : random.int(3),
    endIndex: sharedDepot ? 0 : random.int(3),
    workStartMin: 450 + 30 * random.int(3),
    workEndMin: 750 + 60 * random.int(6),
  }));
  return { visits, crews, matrix: { seconds, metres } };
}

const served = (plan: DayPlan): string[] => plan.runs.flatMap((r) => r.stops.map((s) => s.visitId)).sort();

describe("exact day planning against brute force", () => {
  it("serves the most colonies possible with the least drive (tiny days, 1–2 crews)", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 1_000_000 }),
        fc.integer({ min: 1, max: 6 }),
        fc.integer({ min: 1, max: 2 }),
        fc.boolean(),
        (seed, visitCount, crewCount, shared) => {
          const input = seededDay(seed, visitCount, crewCount, shared);
          const best = bruteForce(input);
          const exact = planDay({ ...input, options: { method: "exact" } });
          expect(exact.colonies).toBe(best.colonies);
          expect(exact.driveSeconds).toBeCloseTo(best.drive, 6);
          // The deferred colonies are the fewest possible.
          const total = input.visits.reduce((s, v) => s + v.colonies, 0);
          expect(exact.deferred.reduce((s, d) => s + d.colonies, 0)).toBe(total - best.colonies);
          const heuristic = planDay({ ...input, options: { method: "heuristic", iterations: 30 } });
          expect(heuristic.colonies).toBe(best.colonies);
          expect(heuristic.driveSeconds).toBeCloseTo(best.drive, 6);
        },
      ),
      { numRuns: 40 },
    );
  });
});

describe("heuristic against the exact solver", () => {
  // Small days (≤ 10 visits, 1–3 crews). The heuristic's own final phase solves every
  // crew, pair and triple of crews exactly whenever their stops and candidates number
  // ≤ 12, so on days this small it must reach the exact optimum: same colonies, same drive.
  it("agrees exactly on small days", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 1_000_000 }),
        fc.integer({ min: 2, max: 10 }),
        fc.integer({ min: 1, max: 3 }),
        fc.boolean(),
        (seed, visitCount, crewCount, shared) => {
          const input = seededDay(seed, visitCount, crewCount, shared);
          const exact = planDay({ ...input, options: { method: "exact" } });
          const heuristic = planDay({ ...input, options: { method: "heuristic", iterations: 60 } });
          expect(heuristic.method).toBe("heuristic");
          expect(heuristic.colonies).toBe(exact.colonies);
          expect(heuristic.driveSeconds).toBeCloseTo(exact.driveSeconds, 6);
        },
      ),
      { numRuns: 40 },
    );
  });

  // 13–14 plannable visits on 2–3 crews (all-day, morning or afternoon windows): beyond the
  // heuristic's exact neighbourhoods, so its search alone must find the optimum. Decision:
  // colonies come first in the objective and must match exactly; drive may be at most 5 %
  // longer on any day and 0.5 % on average. Basis: a 120-day trial of this generator while
  // building the planner (60 days with a shared depot, 60 with separate depots) matched
  // colonies on all 120 and drive on 116; the four others were 0.1–4.4 % longer.
  it("serves the same colonies with at most a few % more drive on 13–14-visit days", () => {
    const excess: number[] = [];
    for (let seed = 1; seed <= 8; seed++) {
      const input = seededDay(seed * 7_919, 13 + (seed % 2), 2 + (seed % 2), seed > 4);
      input.visits.forEach((v) => (v.window = { startMin: 480, endMin: v.window.endMin < 900 ? 720 : 1020 }));
      const exact = planDay({ ...input, options: { method: "exact" } });
      const heuristic = planDay(input);
      expect(heuristic.method).toBe("heuristic");
      expect(heuristic.colonies).toBe(exact.colonies);
      expect(heuristic.driveSeconds).toBeGreaterThanOrEqual(exact.driveSeconds - EPS);
      expect(heuristic.driveSeconds).toBeLessThanOrEqual(exact.driveSeconds * 1.05 + EPS);
      excess.push(heuristic.driveSeconds / exact.driveSeconds - 1);
    }
    expect(excess.reduce((a, b) => a + b, 0) / excess.length).toBeLessThanOrEqual(0.005);
  });
});

describe("route order on bigger days", () => {
  it("orders every crew's stops optimally when a crew has few enough (brute force ≤ 7 stops)", () => {
    let checked = 0;
    for (let seed = 1; seed <= 4; seed++) {
      const input = seededDay(seed * 104_729, 22, 3, seed % 2 === 0);
      const plan = planDay({ ...input, options: { iterations: 60 } });
      expect(plan.method).toBe("heuristic");
      const byId = new Map(input.visits.map((v) => [v.id, v]));
      plan.runs.forEach((run, c) => {
        if (run.stops.length < 2 || run.stops.length > 7) return;
        const stops = run.stops.map((s) => byId.get(s.visitId)!);
        expect(run.driveSeconds).toBeCloseTo(bestOrderDrive(input.crews[c], stops, input.matrix), 6);
        checked++;
      });
    }
    expect(checked).toBeGreaterThan(3);
  });

  it("returns the same plan for the same seed and a valid one for another seed", () => {
    const input = seededDay(99, 24, 2, true);
    const a = planDay({ ...input, options: { seed: 5, iterations: 40 } });
    expect(planDay({ ...input, options: { seed: 5, iterations: 40 } })).toEqual(a);
    const b = planDay({ ...input, options: { seed: 6, iterations: 40 } });
    expect(served(b).length + b.deferred.length).toBe(24);
  });
});
