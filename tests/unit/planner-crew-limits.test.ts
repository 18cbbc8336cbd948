import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { planDay, type DayPlan, type PlanCrew, type PlanDayInput, type PlanVisit } from "~/domain/planner";

// A crew's daily limits (colonies, grams of oxalic acid dihydrate) are hard rules of the day
// planner: checked here by adding up every run independently of the planner's code.

const EPS = 1e-6;

/** Depot 0 and yards 1…4 a few minutes apart: time never binds, only the limits do. */
const near = {
  seconds: [
    [0, 300, 360, 420, 480],
    [300, 0, 120, 180, 240],
    [360, 120, 0, 120, 180],
    [420, 180, 120, 0, 120],
    [480, 240, 180, 120, 0],
  ],
  metres: [
    [0, 4000, 5000, 6000, 7000],
    [4000, 0, 1500, 2500, 3500],
    [5000, 1500, 0, 1500, 2500],
    [6000, 2500, 1500, 0, 1500],
    [7000, 3500, 2500, 1500, 0],
  ],
};

const crew = (id: string, limits: Partial<Pick<PlanCrew, "maxColonies" | "maxDoseGrams">> = {}): PlanCrew => ({
  id,
  startIndex: 0,
  endIndex: 0,
  workStartMin: 480,
  workEndMin: 1020,
  ...limits,
});

const visit = (id: string, pointIndex: number, colonies: number, doseGrams = colonies, bookedAt = "2026-09-01T10:00:00Z"): PlanVisit => ({
  id,
  pointIndex,
  colonies,
  doseGrams,
  serviceMinutes: 20,
  window: { startMin: 480, endMin: 1020 },
  bookedAt,
});

/** Every run within its crew's limits; every visit served once or deferred once. */
function checkLimits(input: PlanDayInput, plan: DayPlan): void {
  const byId = new Map(input.visits.map((v) => [v.id, v]));
  const seen = new Set<string>();
  plan.runs.forEach((run, c) => {
    const limits = input.crews[c];
    const colonies = run.stops.reduce((sum, s) => sum + byId.get(s.visitId)!.colonies, 0);
    const grams = run.stops.reduce((sum, s) => sum + (byId.get(s.visitId)!.doseGrams ?? 0), 0);
    if (limits.maxColonies != null) expect(colonies, `${run.crewId} colonies`).toBeLessThanOrEqual(limits.maxColonies);
    if (limits.maxDoseGrams != null) expect(grams, `${run.crewId} grams`).toBeLessThanOrEqual(limits.maxDoseGrams + EPS);
    for (const stop of run.stops) {
      expect(seen.has(stop.visitId)).toBe(false);
      seen.add(stop.visitId);
    }
  });
  for (const d of plan.deferred) {
    expect(seen.has(d.visitId)).toBe(false);
    seen.add(d.visitId);
  }
  expect(seen.size).toBe(input.visits.length);
}

describe("a crew's daily colony limit", () => {
  it("is never exceeded, and the planner serves the most colonies within it", () => {
    // 6 + 4 = 10 fit the limit of 10 exactly; 5 does not fit beside either.
    const input: PlanDayInput = {
      visits: [visit("six", 1, 6), visit("five", 2, 5), visit("four", 3, 4)],
      crews: [crew("north", { maxColonies: 10 })],
      matrix: near,
    };
    for (const method of ["exact", "heuristic"] as const) {
      const plan = planDay({ ...input, options: { method } });
      checkLimits(input, plan);
      expect(plan.colonies).toBe(10);
      expect(plan.runs[0].stops.map((s) => s.visitId).sort()).toEqual(["four", "six"]);
      expect(plan.deferred).toEqual([expect.objectContaining({ visitId: "five", reason: "does_not_fit_day" })]);
      expect(plan.deferred[0].message).toMatch(/daily limits/);
    }
  });

  it("splits the day between crews by their limits rather than defer a visit", () => {
    // One crew alone would drive less, but neither limit takes all 24 colonies.
    const input: PlanDayInput = {
      visits: [visit("a", 1, 8), visit("b", 2, 8), visit("c", 3, 8)],
      crews: [crew("small", { maxColonies: 8 }), crew("big", { maxColonies: 16 })],
      matrix: near,
    };
    for (const method of ["exact", "heuristic"] as const) {
      const plan = planDay({ ...input, options: { method } });
      checkLimits(input, plan);
      expect(plan.deferred).toEqual([]);
      expect(plan.runs.map((r) => r.colonies)).toEqual([8, 16]);
    }
    // Without the limits one crew takes it all (so the limits are what split it).
    const free = planDay({ ...input, crews: [crew("small"), crew("big")] });
    expect(free.runs.map((r) => r.colonies).sort()).toEqual([0, 24]);
  });

  it("defers a yard bigger than every crew's limit with a reason naming the limit", () => {
    const input: PlanDayInput = { visits: [visit("huge", 1, 30)], crews: [crew("a", { maxColonies: 20 }), crew("b", { maxColonies: 25 })], matrix: near };
    const plan = planDay(input);
    expect(plan.deferred).toEqual([expect.objectContaining({ visitId: "huge", reason: "does_not_fit_day" })]);
    expect(plan.deferred[0].message).toMatch(/daily limit/);
  });

  it("defers a locked stop that would take its crew past the limit, keeping the locked ones before it", () => {
    const input: PlanDayInput = {
      visits: [
        { ...visit("first", 1, 7), locked: { crewId: "north", position: 0 } },
        { ...visit("second", 2, 7), locked: { crewId: "north", position: 1 } },
      ],
      crews: [crew("north", { maxColonies: 10 }), crew("south")],
      matrix: near,
    };
    const plan = planDay(input);
    checkLimits(input, plan);
    expect(plan.runs[0].stops.map((s) => s.visitId)).toEqual(["first"]);
    expect(plan.deferred).toEqual([expect.objectContaining({ visitId: "second", reason: "does_not_fit_day" })]);
    expect(plan.deferred[0].message).toMatch(/past its daily limit \(10 colonies\)/);
  });
});

describe("a crew's daily gram limit", () => {
  it("counts the grams of each visit (brood boxes), not only its colonies", () => {
    // Two double-deep yards of 5 colonies take 10 g each; the crew carries 15 g.
    const input: PlanDayInput = {
      visits: [visit("deep1", 1, 5, 10), visit("deep2", 2, 5, 10), visit("single", 3, 4, 4)],
      crews: [crew("north", { maxDoseGrams: 15 })],
      matrix: near,
    };
    for (const method of ["exact", "heuristic"] as const) {
      const plan = planDay({ ...input, options: { method } });
      checkLimits(input, plan);
      expect(plan.runs[0].stops).toHaveLength(2);
      expect(plan.colonies).toBe(9);
      expect(plan.deferred.map((d) => d.visitId)).toHaveLength(1);
    }
  });

  it("compares grams in centigrams, so 0.1 g + 0.2 g fits a 0.3 g limit", () => {
    // In binary floating point 0.1 + 0.2 > 0.3, which would leave only "b" (2 colonies).
    const input: PlanDayInput = {
      visits: [visit("a", 1, 1, 0.1), visit("b", 2, 2, 0.2), visit("c", 3, 1, 0.25)],
      crews: [crew("tiny", { maxDoseGrams: 0.3 })],
      matrix: near,
    };
    const plan = planDay(input);
    checkLimits(input, plan);
    expect(plan.colonies).toBe(3);
    expect(plan.deferred.map((d) => d.visitId)).toEqual(["c"]);
  });
});

describe("limits on random days", () => {
  const arbDay = fc
    .record({
      visits: fc.array(
        fc.record({ point: fc.integer({ min: 1, max: 4 }), colonies: fc.integer({ min: 1, max: 12 }), boxes: fc.integer({ min: 1, max: 2 }), booked: fc.integer({ min: 1, max: 9 }) }),
        { minLength: 1, maxLength: 16 },
      ),
      crews: fc.array(
        fc.record({ colonies: fc.option(fc.integer({ min: 1, max: 30 }), { nil: null }), grams: fc.option(fc.integer({ min: 1, max: 40 }), { nil: null }) }),
        { minLength: 1, maxLength: 3 },
      ),
    })
    .map(
      ({ visits, crews }): PlanDayInput => ({
        matrix: near,
        crews: crews.map((c, k) => crew(`crew${k}`, { maxColonies: c.colonies, maxDoseGrams: c.grams })),
        visits: visits.map((v, k) => visit(`v${k}`, v.point, v.colonies, v.colonies * v.boxes, `2026-09-0${v.booked}T10:00:00Z`)),
      }),
    );

  it("never gives a crew more colonies or grams than its limits, exact or heuristic", () => {
    fc.assert(
      fc.property(arbDay, fc.constantFrom("auto" as const, "heuristic" as const), (input, method) => {
        checkLimits(input, planDay({ ...input, options: { method, iterations: 40 } }));
      }),
      { numRuns: 60 },
    );
  });

  it("leaves no deferred visit that would still fit a run within its crew's limits (time never binds here)", () => {
    fc.assert(
      fc.property(arbDay, (input) => {
        const plan = planDay(input);
        checkLimits(input, plan);
        const byId = new Map(input.visits.map((v) => [v.id, v]));
        for (const d of plan.deferred) {
          const v = byId.get(d.visitId)!;
          plan.runs.forEach((run, c) => {
            const limits = input.crews[c];
            const colonies = run.colonies + v.colonies;
            const grams = run.stops.reduce((sum, s) => sum + (byId.get(s.visitId)!.doseGrams ?? 0), 0) + (v.doseGrams ?? 0);
            const fits = (limits.maxColonies == null || colonies <= limits.maxColonies) && (limits.maxDoseGrams == null || grams <= limits.maxDoseGrams + EPS);
            expect(fits, `${d.visitId} would fit ${run.crewId}`).toBe(false);
          });
        }
      }),
      { numRuns: 60 },
    );
  });
});
