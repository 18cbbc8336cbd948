import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { clockTime, planDay, recomputeTimes } from "~/domain/planner/day";
import type { DayPlan, PlanCrew, PlanDayInput, PlanVisit, TravelMatrix } from "~/domain/planner/types";

// ---------------------------------------------------------------------------------------
// Independent checks (no planner code): re-time every run from the matrix and verify the
// hard rules — windows, working hours, locks — and the bookkeeping.
// ---------------------------------------------------------------------------------------

const EPS = 1e-6;

/** Times of a route departing at workStart; null if it breaks a window or the day. */
function simulate(crew: PlanCrew, route: readonly PlanVisit[], matrix: TravelMatrix): { drive: number } | null {
  if (route.length === 0) return { drive: 0 };
  let t = crew.workStartMin;
  let at = crew.startIndex;
  let drive = 0;
  for (const v of route) {
    drive += matrix.seconds[at][v.pointIndex];
    t = Math.max(t + matrix.seconds[at][v.pointIndex] / 60, v.window.startMin);
    t += v.serviceMinutes;
    if (t > v.window.endMin + EPS) return null;
    at = v.pointIndex;
  }
  drive += matrix.seconds[at][crew.endIndex];
  t += matrix.seconds[at][crew.endIndex] / 60;
  return t <= crew.workEndMin + EPS ? { drive } : null;
}

function checkPlan(input: PlanDayInput, plan: DayPlan): void {
  const { visits, crews, matrix } = input;
  const byId = new Map(visits.map((v) => [v.id, v]));
  const seen = new Set<string>();
  expect(plan.runs.map((r) => r.crewId)).toEqual(crews.map((c) => c.id));
  let colonies = 0;
  let drive = 0;
  plan.runs.forEach((run, c) => {
    const crew = crews[c];
    expect(run.departMin).toBeGreaterThanOrEqual(crew.workStartMin - EPS);
    let t = run.departMin;
    let at = crew.startIndex;
    let seconds = 0;
    let metres = 0;
    let lastLock = -Infinity;
    for (const stop of run.stops) {
      const visit = byId.get(stop.visitId)!;
      expect(visit).toBeDefined();
      expect(seen.has(visit.id)).toBe(false);
      seen.add(visit.id);
      const leg = matrix.seconds[at][visit.pointIndex];
      seconds += leg;
      metres += matrix.metres[at][visit.pointIndex];
      expect(stop.driveSecondsIn).toBe(leg);
      expect(stop.arriveMin).toBeCloseTo(t + leg / 60, 6);
      expect(stop.startMin).toBeCloseTo(Math.max(stop.arriveMin, visit.window.startMin), 6);
      expect(stop.waitMin).toBeCloseTo(stop.startMin - stop.arriveMin, 6);
      expect(stop.leaveMin).toBeCloseTo(stop.startMin + visit.serviceMinutes, 6);
      // The hard rules: service within the window.
      expect(stop.startMin).toBeGreaterThanOrEqual(visit.window.startMin - EPS);
      expect(stop.leaveMin).toBeLessThanOrEqual(visit.window.endMin + EPS);
      if (visit.locked) {
        expect(visit.locked.crewId).toBe(crew.id);
        expect(visit.locked.position).toBeGreaterThanOrEqual(lastLock);
        lastLock = visit.locked.position;
      }
      t = stop.leaveMin;
      at = visit.pointIndex;
    }
    if (run.stops.length > 0) {
      seconds += matrix.seconds[at][crew.endIndex];
      metres += matrix.metres[at][crew.endIndex];
      expect(run.returnMin).toBeCloseTo(t + matrix.seconds[at][crew.endIndex] / 60, 6);
    }
    // The hard rule: back by the end of the working day.
    expect(run.returnMin).toBeLessThanOrEqual(crew.workEndMin + EPS);
    expect(run.driveSeconds).toBeCloseTo(seconds, 6);
    expect(run.driveMetres).toBeCloseTo(metres, 6);
    expect(run.colonies).toBe(run.stops.reduce((s, x) => s + byId.get(x.visitId)!.colonies, 0));
    colonies += run.colonies;
    drive += run.driveSeconds;
  });
  for (const d of plan.deferred) {
    expect(seen.has(d.visitId)).toBe(false);
    seen.add(d.visitId);
    expect(["does_not_fit_day", "outside_every_window", "no_crew"]).toContain(d.reason);
    expect(d.message).toContain(d.visitId);
  }
  expect(seen.size).toBe(visits.length); // every visit exactly once: served or deferred
  expect(plan.colonies).toBe(colonies);
  expect(plan.driveSeconds).toBeCloseTo(drive, 6);
  // Locked visits that were served are all there in their order (checked above); a locked
  // visit is only ever deferred, never moved to another crew.
}

/** A deferred "does_not_fit_day" visit fits nowhere: no insertion into any run is on time. */
function checkNothingFitsLater(input: PlanDayInput, plan: DayPlan): void {
  const byId = new Map(input.visits.map((v) => [v.id, v]));
  for (const d of plan.deferred) {
    if (d.reason !== "does_not_fit_day") continue;
    const visit = byId.get(d.visitId)!;
    plan.runs.forEach((run, c) => {
      const crew = input.crews[c];
      if (visit.locked && visit.locked.crewId !== crew.id) return;
      const stops = run.stops.map((s) => byId.get(s.visitId)!);
      for (let at = 0; at <= stops.length; at++) {
        const route = [...stops.slice(0, at), visit, ...stops.slice(at)];
        const lockedOk = route
          .filter((v) => v.locked)
          .every((v, i, all) => v.locked!.crewId === crew.id && (i === 0 || all[i - 1].locked!.position <= v.locked!.position));
        if (!lockedOk) continue;
        expect(simulate(crew, route, input.matrix), `${visit.id} fits crew ${crew.id} at ${at}`).toBeNull();
      }
    });
  }
}

/** Random days: yards on a 30 km square, road distance 1.3 × straight, ~50 km/h, a little asymmetric. */
const arbDay = (maxVisits: number, maxCrews: number, locks: boolean, minVisits = 0) =>
  fc
    .record({
      points: fc.array(fc.tuple(fc.integer({ min: 0, max: 30_000 }), fc.integer({ min: 0, max: 30_000 })), {
        minLength: Math.min(minVisits, 10) + 2,
        maxLength: maxVisits + 2,
      }),
      uphill: fc.integer({ min: 100, max: 115 }),
      visits: fc.array(
        fc.record({
          point: fc.nat(),
          colonies: fc.integer({ min: 1, max: 24 }),
          service: fc.integer({ min: 5, max: 75 }),
          // All day, morning, afternoon, or any window at all (often impossible).
          window: fc.oneof(
            fc.constant([480, 1020]),
            fc.constant([480, 720]),
            fc.constant([720, 1020]),
            fc.tuple(fc.integer({ min: 420, max: 960 }), fc.integer({ min: 20, max: 600 })).map(([open, length]) => [open, open + length]),
          ),
          booked: fc.integer({ min: 1, max: 5 }),
          // About one visit in six is locked.
          lock: fc.record({ draw: fc.integer({ min: 0, max: 5 }), crew: fc.nat(), position: fc.integer({ min: 0, max: 3 }) }),
        }),
        { minLength: minVisits, maxLength: maxVisits },
      ),
      crews: fc.array(
        fc.record({
          start: fc.nat(),
          end: fc.nat(),
          from: fc.constantFrom(420, 450, 480, 510, 540),
          hours: fc.constantFrom(240, 360, 480, 540, 600),
        }),
        { minLength: 1, maxLength: maxCrews },
      ),
    })
    .map(({ points, uphill, visits, crews }): PlanDayInput => {
      const metres = points.map((a) => points.map((b) => Math.round(1.3 * Math.hypot(a[0] - b[0], a[1] - b[1]))));
      const seconds = metres.map((row, i) => row.map((m, j) => Math.round(((m / 13.9) * (i < j ? uphill : 100)) / 100)));
      const size = points.length;
      return {
        matrix: { seconds, metres },
        crews: crews.map((c, k) => ({
          id: `crew${k}`,
          startIndex: c.start % size,
          endIndex: c.end % size,
          workStartMin: c.from,
          workEndMin: c.from + c.hours,
        })),
        visits: visits.map((v, k) => ({
          id: `v${k}`,
          pointIndex: v.point % size,
          colonies: v.colonies,
          serviceMinutes: v.service,
          window: { startMin: v.window[0], endMin: Math.min(1200, v.window[1]) },
          bookedAt: `2025-09-0${v.booked}T10:00:00Z`,
          ...(locks && v.lock.draw === 0 ? { locked: { crewId: `crew${v.lock.crew % crews.length}`, position: v.lock.position } } : {}),
        })),
      };
    });

// ---------------------------------------------------------------------------------------

/** Depot 0 and yards 1, 2: 0→1 20 min, 1→2 10 min, 2→0 30 min, 0→2 40 min (asymmetric). */
const smallMatrix: TravelMatrix = {
  seconds: [
    [0, 1200, 2400],
    [1200, 0, 600],
    [1800, 600, 0],
  ],
  metres: [
    [0, 15_000, 30_000],
    [15_000, 0, 8_000],
    [24_000, 8_000, 0],
  ],
};
const dayCrew: PlanCrew = { id: "north", startIndex: 0, endIndex: 0, workStartMin: 480, workEndMin: 1020 };
const visit = (id: string, pointIndex: number, colonies: number, serviceMinutes: number, startMin: number, endMin: number, bookedAt = "2025-09-01T10:00:00Z"): PlanVisit => ({
  id,
  pointIndex,
  colonies,
  serviceMinutes,
  window: { startMin, endMin },
  bookedAt,
});

describe("planDay timing", () => {
  it("times a small day by hand: waits for a window, leaves late to avoid waiting first", () => {
    const input: PlanDayInput = {
      visits: [visit("b", 2, 4, 30, 600, 660), visit("a", 1, 6, 45, 540, 720)],
      crews: [dayCrew],
      matrix: smallMatrix,
    };
    const plan = planDay(input);
    checkPlan(input, plan);
    // a then b drives 20 + 10 + 30 = 60 min; b then a would drive 40 + 10 + 20 = 70 min.
    const run = plan.runs[0];
    expect(run.stops.map((s) => s.visitId)).toEqual(["a", "b"]);
    expect(run.departMin).toBe(520); // 08:40, to arrive at a's window opening 09:00
    expect(run.stops[0]).toMatchObject({ arriveMin: 540, waitMin: 0, startMin: 540, leaveMin: 585, driveSecondsIn: 1200 });
    expect(run.stops[1]).toMatchObject({ arriveMin: 595, waitMin: 5, startMin: 600, leaveMin: 630, driveSecondsIn: 600 });
    expect(run.returnMin).toBe(660);
    expect(run.driveSeconds).toBe(3600);
    expect(run.driveMetres).toBe(15_000 + 8_000 + 24_000);
    expect(plan).toMatchObject({ colonies: 10, driveSeconds: 3600, deferred: [], method: "exact" });
  });

  it("formats clock times", () => {
    expect(clockTime(0)).toBe("00:00");
    expect(clockTime(545)).toBe("09:05");
    expect(clockTime(1019.6)).toBe("17:00");
  });
});

describe("planDay deferrals", () => {
  it("defers the fewest colonies, not the smallest yards first", () => {
    // Yards all at point 1, 20 min from the depot each way: 200 minutes of service time.
    // Greedy by size would take A (10) and then fit neither B nor C; B + C serve 12.
    const input: PlanDayInput = {
      visits: [visit("A", 1, 10, 150, 0, 1440), visit("B", 1, 6, 100, 0, 1440), visit("C", 1, 6, 100, 0, 1440)],
      crews: [{ ...dayCrew, workStartMin: 480, workEndMin: 480 + 240 }],
      matrix: smallMatrix,
    };
    const plan = planDay(input);
    checkPlan(input, plan);
    expect(plan.colonies).toBe(12);
    expect(plan.deferred).toEqual([expect.objectContaining({ visitId: "A", colonies: 10, reason: "does_not_fit_day" })]);
    // The heuristic agrees.
    expect(planDay({ ...input, options: { method: "heuristic" } }).deferred.map((d) => d.visitId)).toEqual(["A"]);
  });

  it("breaks a tie on colonies and drive by the earlier booking", () => {
    const input: PlanDayInput = {
      visits: [
        visit("late", 1, 6, 100, 0, 1440, "2025-09-03T09:00:00Z"),
        visit("early", 1, 6, 100, 0, 1440, "2025-09-02T09:00:00Z"),
        visit("big", 1, 10, 100, 0, 1440, "2025-09-04T09:00:00Z"),
      ],
      crews: [{ ...dayCrew, workStartMin: 480, workEndMin: 480 + 240 }],
      matrix: smallMatrix,
    };
    for (const method of ["exact", "heuristic"] as const) {
      const plan = planDay({ ...input, options: { method } });
      expect(plan.runs[0].stops.map((s) => s.visitId).sort()).toEqual(["big", "early"]);
      expect(plan.deferred.map((d) => d.visitId)).toEqual(["late"]);
    }
  });

  it("gives a reason for each deferral", () => {
    const input: PlanDayInput = {
      visits: [
        visit("dawn", 1, 3, 30, 300, 400), // 05:00–06:40, crews start at 08:00
        visit("squeeze", 1, 3, 90, 600, 660), // 90 min of service in a 60 min window
        visit("fine", 1, 3, 30, 600, 900),
      ],
      crews: [dayCrew],
      matrix: smallMatrix,
    };
    const plan = planDay(input);
    checkPlan(input, plan);
    expect(plan.runs[0].stops.map((s) => s.visitId)).toEqual(["fine"]);
    const reasons = Object.fromEntries(plan.deferred.map((d) => [d.visitId, d]));
    expect(reasons.dawn.reason).toBe("outside_every_window");
    expect(reasons.dawn.message).toMatch(/05:00–06:40/);
    expect(reasons.squeeze.reason).toBe("outside_every_window");
    expect(reasons.squeeze.message).toMatch(/90 minutes/);

    const noCrews = planDay({ ...input, crews: [] });
    expect(noCrews.runs).toEqual([]);
    expect(noCrews.deferred.map((d) => d.reason)).toEqual(["no_crew", "no_crew", "no_crew"]);
  });

  it("rejects malformed input", () => {
    const ok: PlanDayInput = { visits: [visit("a", 1, 6, 45, 540, 720)], crews: [dayCrew], matrix: smallMatrix };
    expect(() => planDay(ok)).not.toThrow();
    expect(() => planDay({ ...ok, visits: [{ ...ok.visits[0], pointIndex: 3 }] })).toThrow(/pointIndex/);
    expect(() => planDay({ ...ok, visits: [ok.visits[0], ok.visits[0]] })).toThrow(/twice/);
    expect(() => planDay({ ...ok, visits: [{ ...ok.visits[0], bookedAt: "yesterday" }] })).toThrow(/bookedAt/);
    expect(() => planDay({ ...ok, visits: [{ ...ok.visits[0], window: { startMin: 700, endMin: 600 } }] })).toThrow(/window/);
    expect(() => planDay({ ...ok, crews: [{ ...dayCrew, endIndex: -1 }] })).toThrow(/endIndex/);
    expect(() => planDay({ ...ok, matrix: { ...smallMatrix, metres: [[0]] } })).toThrow(/metres/);
  });
});

describe("planDay with two crews", () => {
  // Ten yards on a line east of the depot, 6 km apart (8 min); each needs 60 min.
  const line = (n: number): TravelMatrix => {
    const seconds = Array.from({ length: n + 1 }, (_, i) => Array.from({ length: n + 1 }, (_, j) => Math.abs(i - j) * 480));
    const metres = seconds.map((row) => row.map((s) => s * 12.5));
    return { seconds, metres };
  };
  const crewsFullDay: PlanCrew[] = [
    { id: "east", startIndex: 0, endIndex: 0, workStartMin: 480, workEndMin: 1020 },
    { id: "west", startIndex: 0, endIndex: 0, workStartMin: 480, workEndMin: 1020 },
  ];

  it("shares a day one crew cannot do alone, deferring nothing", () => {
    const input: PlanDayInput = {
      visits: Array.from({ length: 10 }, (_, k) => visit(`y${k + 1}`, k + 1, 4, 60, 480, 1020)),
      crews: crewsFullDay,
      matrix: line(10),
    };
    const alone = planDay({ ...input, crews: [crewsFullDay[0]] });
    expect(alone.deferred.length).toBeGreaterThan(0); // 10 h of service in a 9 h day
    const plan = planDay(input);
    checkPlan(input, plan);
    expect(plan.deferred).toEqual([]);
    expect(plan.runs.every((r) => r.stops.length > 0)).toBe(true);
    expect(plan.colonies).toBe(40);
  });

  it("gives afternoon work to the crew that works in the afternoon", () => {
    const input: PlanDayInput = {
      visits: [visit("am", 2, 5, 60, 480, 720), visit("pm", 3, 8, 60, 780, 960), visit("any", 1, 3, 30, 480, 1020)],
      crews: [
        { id: "morning", startIndex: 0, endIndex: 0, workStartMin: 480, workEndMin: 720 },
        { id: "allday", startIndex: 0, endIndex: 0, workStartMin: 480, workEndMin: 1020 },
      ],
      matrix: line(3),
    };
    for (const method of ["exact", "heuristic"] as const) {
      const plan = planDay({ ...input, options: { method } });
      checkPlan(input, plan);
      expect(plan.deferred).toEqual([]);
      expect(plan.runs[1].stops.map((s) => s.visitId)).toContain("pm");
    }
  });

  it("never leaves a crew idle while deferring work it could take (property)", () => {
    fc.assert(
      fc.property(arbDay(9, 2, false), (input) => {
        const plan = planDay(input);
        checkPlan(input, plan);
        checkNothingFitsLater(input, plan);
      }),
      { numRuns: 60 },
    );
  });
});

describe("planDay hard rules (property tests)", () => {
  it("never breaks a window, the working day or a lock on small days (exact)", () => {
    fc.assert(
      fc.property(arbDay(8, 3, true), (input) => {
        const plan = planDay(input);
        expect(plan.method).toBe("exact");
        checkPlan(input, plan);
      }),
      { numRuns: 80 },
    );
  });

  it("never breaks a window, the working day or a lock with the heuristic", () => {
    fc.assert(
      fc.property(arbDay(10, 3, true, 3), (input) => {
        const plan = planDay({ ...input, options: { method: "heuristic", iterations: 40 } });
        checkPlan(input, plan);
        checkNothingFitsLater(input, plan);
      }),
      { numRuns: 50 },
    );
  });

  it("never breaks them on larger days either", () => {
    fc.assert(
      fc.property(arbDay(30, 3, true, 14), (input) => {
        const plan = planDay({ ...input, options: { iterations: 30 } });
        checkPlan(input, plan);
        checkNothingFitsLater(input, plan);
      }),
      { numRuns: 12 },
    );
  });
});

describe("planDay determinism", () => {
  it("gives the same plan for the same input, whatever the order of the visits", () => {
    fc.assert(
      fc.property(arbDay(18, 2, true, 13), fc.integer({ min: 1, max: 1000 }), (input, seed) => {
        const options = { seed, iterations: 25 };
        const first = planDay({ ...input, options });
        expect(planDay({ ...input, options })).toEqual(first);
        const reversed = { ...input, visits: [...input.visits].reverse(), options };
        expect(planDay(reversed)).toEqual(first);
      }),
      { numRuns: 15 },
    );
  });
});

describe("locked stops", () => {
  // Crew A's depot at (0, 0) km, crew B's at (20, 0); yards in between; 1 km = 1 min.
  const points = [[0, 0], [1, 1], [2, 0], [3, 1], [10, 5], [17, 1], [20, 0]];
  const km = points.map((a) => points.map((b) => Math.hypot(a[0] - b[0], a[1] - b[1])));
  const matrix: TravelMatrix = {
    seconds: km.map((row) => row.map((d) => Math.round(d * 60))),
    metres: km.map((row) => row.map((d) => Math.round(d * 1000))),
  };
  const crews: PlanCrew[] = [
    { id: "A", startIndex: 0, endIndex: 0, workStartMin: 480, workEndMin: 1020 },
    { id: "B", startIndex: 6, endIndex: 6, workStartMin: 480, workEndMin: 1020 },
  ];

  it("keeps locked stops with their crew, in their order, and plans the rest around them", () => {
    const visits: PlanVisit[] = [
      { ...visit("near-A", 1, 5, 30, 480, 1020), locked: { crewId: "B", position: 2 } },
      { ...visit("mid", 4, 5, 30, 480, 1020), locked: { crewId: "B", position: 1 } },
      visit("free1", 2, 4, 30, 480, 1020),
      visit("free2", 5, 4, 30, 480, 1020),
      visit("free3", 3, 4, 30, 480, 1020),
    ];
    for (const method of ["exact", "heuristic"] as const) {
      const input: PlanDayInput = { visits, crews, matrix, options: { method } };
      const plan = planDay(input);
      checkPlan(input, plan);
      expect(plan.deferred).toEqual([]);
      const b = plan.runs[1].stops.map((s) => s.visitId);
      // Crew B would never drive to yard 1 unforced (crew A starts next to it).
      expect(b.indexOf("mid")).toBeGreaterThanOrEqual(0);
      expect(b.indexOf("near-A")).toBeGreaterThan(b.indexOf("mid"));
      expect(plan.runs[1].stops.find((s) => s.visitId === "near-A")!.locked).toBe(true);
      const withoutLocks = planDay({ ...input, visits: visits.map(({ locked: _, ...v }) => v) });
      expect(withoutLocks.runs[0].stops.map((s) => s.visitId)).toContain("near-A");
    }
  });

  it("defers a locked stop that cannot be kept after the crew's earlier locked stops", () => {
    const visits: PlanVisit[] = [
      { ...visit("first", 1, 5, 60, 840, 960), locked: { crewId: "A", position: 1 } }, // afternoon
      { ...visit("second", 2, 5, 60, 480, 600), locked: { crewId: "A", position: 2 } }, // morning
      { ...visit("ghost", 2, 5, 60, 480, 600), locked: { crewId: "Z", position: 1 } },
      // Equal positions may come in either order: "pair2" must go first to make its window.
      { ...visit("pair1", 5, 2, 30, 600, 1000), locked: { crewId: "B", position: 1 } },
      { ...visit("pair2", 4, 2, 30, 480, 540), locked: { crewId: "B", position: 1 } },
    ];
    const input: PlanDayInput = { visits, crews, matrix };
    const plan = planDay(input);
    checkPlan(input, plan);
    expect(plan.runs[0].stops.map((s) => s.visitId)).toEqual(["first"]);
    const reasons = Object.fromEntries(plan.deferred.map((d) => [d.visitId, d]));
    expect(reasons.second.reason).toBe("does_not_fit_day");
    expect(reasons.second.message).toMatch(/locked to crew A/);
    expect(reasons.ghost.reason).toBe("no_crew");
    expect(reasons.ghost.message).toMatch(/crew Z/);
    expect(plan.runs[1].stops.map((s) => s.visitId)).toEqual(["pair2", "pair1"]);
  });
});

describe("recomputeTimes", () => {
  const visits = [visit("a", 1, 6, 45, 540, 720), visit("b", 2, 4, 30, 600, 660)];

  it("re-times a planned order exactly as the plan did", () => {
    const input: PlanDayInput = { visits, crews: [dayCrew], matrix: smallMatrix };
    const run = planDay(input).runs[0];
    const again = recomputeTimes(dayCrew, ["a", "b"], visits, smallMatrix);
    expect(again.feasible).toBe(true);
    expect(again.issues).toEqual([]);
    const { feasible: _f, issues: _i, ...rest } = again;
    expect(rest).toEqual(run);
  });

  it("flags a window broken by a dragged stop", () => {
    // a's window closes at 11:00. Dragged to b first: leave 09:20, 40 min → b 10:00–10:30,
    // 10 min → a 10:40–11:25, 25 min after a's window closes.
    const tight = [visit("a", 1, 6, 45, 540, 660), visits[1]];
    const moved = recomputeTimes(dayCrew, ["b", "a"], tight, smallMatrix);
    expect(moved.stops.map((s) => [s.visitId, s.startMin, s.leaveMin])).toEqual([
      ["b", 600, 630],
      ["a", 640, 685],
    ]);
    expect(moved.feasible).toBe(false);
    expect(moved.issues).toEqual([
      expect.objectContaining({ kind: "window_missed", visitId: "a", minutes: 25 }),
    ]);
    expect(moved.issues[0].message).toMatch(/11:25.*25 min.*11:00/);
  });

  it("flags an overrun of the working day", () => {
    const shortDay: PlanCrew = { ...dayCrew, workEndMin: 650 };
    const result = recomputeTimes(shortDay, ["a", "b"], visits, smallMatrix);
    expect(result.feasible).toBe(false);
    expect(result.issues).toEqual([expect.objectContaining({ kind: "work_day_overrun", minutes: 10 })]);
    expect(() => recomputeTimes(dayCrew, ["a", "zzz"], visits, smallMatrix)).toThrow(/unknown visit/);
  });
});
