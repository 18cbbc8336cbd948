import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  coloniesPerCrewDay,
  gapBetweenDosesMinutes,
  perHiveMinutes,
  serviceMinutesForYard,
  treatmentCycles,
  type YardServiceInput,
} from "~/domain/service-time";

// A crew written for these tests: 36 s a dose (common practice: 30–40 s), 2 min between hives,
// block back to temperature in 45 s, entrance closed 10 min (common practice), 15 min set-up.
const CREW: Omit<YardServiceInput, "colonies"> = {
  vaporizers: 1,
  setupMinutes: 15,
  sublimationSeconds: 36,
  moveBetweenHivesMinutes: 2,
  blockReheatSeconds: 45,
  entranceClosedMinutes: 10,
};

describe("per-hive cycle", () => {
  it("is the sublimation plus the move when the block reheats during the move", () => {
    // common practice: 30–40 s per dose; 36 s = 0.6 min, + 2 min move
    expect(gapBetweenDosesMinutes(CREW)).toBe(2);
    expect(perHiveMinutes(CREW)).toBeCloseTo(2.6, 12);
  });

  it("waits for the block when the reheat takes longer than the move", () => {
    const slowBlock = { ...CREW, moveBetweenHivesMinutes: 0.5, blockReheatSeconds: 150 };
    expect(gapBetweenDosesMinutes(slowBlock)).toBe(2.5);
    expect(perHiveMinutes(slowBlock)).toBeCloseTo(3.1, 12);
  });

  it("rejects negative times", () => {
    expect(() => perHiveMinutes({ ...CREW, sublimationSeconds: -1 })).toThrow(RangeError);
    expect(() => perHiveMinutes({ ...CREW, entranceClosedMinutes: Number.NaN })).toThrow(RangeError);
  });
});

describe("treatmentCycles", () => {
  it("rounds up: a vaporizer cannot split a hive", () => {
    expect(treatmentCycles(0, 2)).toBe(0);
    expect(treatmentCycles(1, 2)).toBe(1);
    expect(treatmentCycles(3, 2)).toBe(2);
    expect(treatmentCycles(4, 2)).toBe(2);
    expect(() => treatmentCycles(3, 0)).toThrow(RangeError);
    expect(() => treatmentCycles(-1, 1)).toThrow(RangeError);
    expect(() => treatmentCycles(2.5, 1)).toThrow(RangeError);
  });
});

describe("serviceMinutesForYard", () => {
  it("is 0 for a yard with no colonies (no visit)", () => {
    expect(serviceMinutesForYard({ ...CREW, colonies: 0 })).toBe(0);
    expect(serviceMinutesForYard({ ...CREW, colonies: 0, vaporizers: 3 })).toBe(0);
  });

  it("is set-up, one dose and the entrance wait for a single colony", () => {
    // 15 + 0.6 + 10
    expect(serviceMinutesForYard({ ...CREW, colonies: 1 })).toBeCloseTo(25.6, 12);
  });

  it("adds a cycle per further colony with one vaporizer, and the wait only once", () => {
    // 15 + 5 × 0.6 + 4 × 2 + 10 = 36
    expect(serviceMinutesForYard({ ...CREW, colonies: 5 })).toBeCloseTo(36, 12);
  });

  it("shares the hives between vaporizers", () => {
    // 2 vaporizers, 5 colonies → 3 cycles: 15 + 3 × 0.6 + 2 × 2 + 10 = 30.8
    expect(serviceMinutesForYard({ ...CREW, vaporizers: 2, colonies: 5 })).toBeCloseTo(30.8, 12);
    // 6 colonies take the same 3 cycles
    expect(serviceMinutesForYard({ ...CREW, vaporizers: 2, colonies: 6 })).toBeCloseTo(30.8, 12);
  });

  it("never drops below set-up plus the entrance wait", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 200 }), fc.integer({ min: 1, max: 6 }), (colonies, vaporizers) => {
        const minutes = serviceMinutesForYard({ ...CREW, colonies, vaporizers });
        expect(minutes).toBeGreaterThanOrEqual(CREW.setupMinutes + CREW.entranceClosedMinutes);
      }),
    );
  });

  it("is monotone non-decreasing in colonies", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 300 }),
        fc.integer({ min: 1, max: 6 }),
        fc.record({
          setupMinutes: fc.double({ min: 0, max: 60, noNaN: true }),
          sublimationSeconds: fc.double({ min: 0, max: 120, noNaN: true }),
          moveBetweenHivesMinutes: fc.double({ min: 0, max: 10, noNaN: true }),
          blockReheatSeconds: fc.double({ min: 0, max: 300, noNaN: true }),
          entranceClosedMinutes: fc.double({ min: 0, max: 20, noNaN: true }),
        }),
        (colonies, vaporizers, cycle) => {
          const now = serviceMinutesForYard({ ...cycle, colonies, vaporizers });
          const more = serviceMinutesForYard({ ...cycle, colonies: colonies + 1, vaporizers });
          expect(more).toBeGreaterThanOrEqual(now);
        },
      ),
    );
  });

  it("never grows when a vaporizer is added", () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 300 }), fc.integer({ min: 1, max: 6 }), (colonies, vaporizers) => {
        const fewer = serviceMinutesForYard({ ...CREW, colonies, vaporizers });
        const more = serviceMinutesForYard({ ...CREW, colonies, vaporizers: vaporizers + 1 });
        expect(more).toBeLessThanOrEqual(fewer);
      }),
    );
  });

  it("rejects impossible inputs", () => {
    expect(() => serviceMinutesForYard({ ...CREW, colonies: -1 })).toThrow(RangeError);
    expect(() => serviceMinutesForYard({ ...CREW, colonies: 3, vaporizers: 0 })).toThrow(RangeError);
    expect(() => serviceMinutesForYard({ ...CREW, colonies: 3, setupMinutes: -5 })).toThrow(RangeError);
  });
});

describe("coloniesPerCrewDay", () => {
  it("fits no colony when set-up, a dose and the wait do not fit", () => {
    expect(coloniesPerCrewDay(25, CREW)).toBe(0); // one colony needs 25.6 min
    expect(coloniesPerCrewDay(0, CREW)).toBe(0);
  });

  it("counts the colonies that fit in a working day", () => {
    // one vaporizer: 25.6 + (n − 1) × 2.6 ≤ 480 → n ≤ 175.77 → 175
    expect(coloniesPerCrewDay(480, CREW)).toBe(175);
    // two vaporizers: cycles ≤ 175 → 350 colonies
    expect(coloniesPerCrewDay(480, { ...CREW, vaporizers: 2 })).toBe(350);
  });

  it("is the largest count that fits", () => {
    // On the boundary: 5 colonies on one vaporizer take exactly 15 + 5 × 0.6 + 4 × 2 + 10 = 36 min.
    expect(coloniesPerCrewDay(36, CREW)).toBe(5);
    // A little less fits only 4: 15 + 4 × 0.6 + 3 × 2 + 10 = 33.4 ≤ 35.9 < 36.
    expect(coloniesPerCrewDay(35.9, CREW)).toBe(4);
    // Two vaporizers: 6 colonies are 3 cycles, exactly 15 + 3 × 0.6 + 2 × 2 + 10 = 30.8 min.
    expect(coloniesPerCrewDay(30.8, { ...CREW, vaporizers: 2 })).toBe(6);
    // Three vaporizers: 15 + c × 0.6 + (c − 1) × 2 + 10 = 23 + 2.6c ≤ 38.6 → c ≤ 6 cycles → 18.
    expect(coloniesPerCrewDay(38.6, { ...CREW, vaporizers: 3 })).toBe(18);
    // For any day: n fits and n + 1 does not (serviceMinutesForYard is pinned by the figures above).
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 720 }), fc.integer({ min: 1, max: 4 }), (working, vaporizers) => {
        const crew = { ...CREW, vaporizers };
        const n = coloniesPerCrewDay(working, crew);
        if (n > 0) expect(serviceMinutesForYard({ ...crew, colonies: n })).toBeLessThanOrEqual(working);
        expect(serviceMinutesForYard({ ...crew, colonies: n + 1 })).toBeGreaterThan(working);
      }),
    );
  });

  it("refuses a zero-length hive cycle, which would fit unlimited colonies", () => {
    const instant = { ...CREW, sublimationSeconds: 0, moveBetweenHivesMinutes: 0, blockReheatSeconds: 0 };
    expect(() => coloniesPerCrewDay(480, instant)).toThrow(RangeError);
    expect(() => coloniesPerCrewDay(-1, CREW)).toThrow(RangeError);
  });
});
