import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  centigramsToGrams,
  doseGramsForColony,
  doseGramsForRun,
  doseGramsForSeason,
  doseGramsForVisit,
  doseGramsForYard,
  doseRateProblems,
  gramsToCentigrams,
  isDoseRateWithinLabel,
  roundDoseGrams,
} from "~/domain/dose";

describe("dose per colony", () => {
  it("gives 1 g per brood box at the pre-2025 US label rate", () => {
    // Source: US label EPA Reg. No. 73291-2, 1 g per brood chamber (Tellarini Prieto et al. 2024).
    expect(doseGramsForColony(1, 1)).toBe(1);
    expect(doseGramsForColony(2, 1)).toBe(2);
    expect(doseGramsForColony(3, 1)).toBe(3);
  });

  it("gives up to 4 g per brood box at the amended label's maximum", () => {
    // Source: amended US label (2025-06-24, as reported): up to 4 g per brood chamber.
    expect(doseGramsForColony(2, 4)).toBe(8);
  });

  it("refuses a colony without brood boxes and a rate of 0 g, so no colony is treated with nothing", () => {
    // common practice: a living colony has at least one brood box; the dose goes by brood box.
    expect(() => doseGramsForColony(0, 1)).toThrow(/at least 1 brood box/);
    expect(() => doseGramsForColony(0, 4)).toThrow(RangeError);
    expect(() => doseGramsForColony(2, 0)).toThrow(/more than 0|> 0/);
  });

  it("rounds to 0.01 g, half away from zero", () => {
    expect(doseGramsForColony(3, 0.333)).toBe(1); // 0.999 g → 1.00 g
    expect(doseGramsForColony(3, 1 / 3)).toBe(1);
    expect(doseGramsForColony(1, 1.005)).toBe(1.01);
    expect(doseGramsForColony(1, 1.004)).toBe(1);
    expect(doseGramsForColony(3, 0.1)).toBe(0.3); // 3 × 0.1 = 0.30000000000000004 in binary
  });

  it("rejects impossible brood boxes and rates", () => {
    expect(() => doseGramsForColony(-1, 1)).toThrow(RangeError);
    expect(() => doseGramsForColony(1.5, 1)).toThrow(RangeError);
    expect(() => doseGramsForColony(1, -0.5)).toThrow(RangeError);
    expect(() => doseGramsForColony(1, Number.NaN)).toThrow(RangeError);
  });

  it("scales linearly with brood boxes (rates in whole centigrams)", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 50 }), fc.integer({ min: 1, max: 1000 }), (boxes, rateCg) => {
        const rate = rateCg / 100;
        expect(gramsToCentigrams(doseGramsForColony(boxes, rate))).toBe(boxes * gramsToCentigrams(doseGramsForColony(1, rate)));
      }),
    );
  });

  it("stays within 0.005 g of boxes × rate for any rate", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 50 }), fc.double({ min: Number.MIN_VALUE, max: 10, noNaN: true }), (boxes, rate) => {
        expect(Math.abs(doseGramsForColony(boxes, rate) - boxes * rate)).toBeLessThanOrEqual(0.005 + 1e-9);
      }),
    );
  });
});

describe("dose per yard, visit, run and season", () => {
  it("multiplies colonies by each colony's dose", () => {
    // Source: 1 g per brood chamber (US label, as above): 6 colonies × 2 boxes = 12 g.
    expect(doseGramsForYard({ colonies: 6, broodBoxesPerColony: 2 }, 1)).toBe(12);
    expect(doseGramsForYard({ colonies: 24, broodBoxesPerColony: 1 }, 0.1)).toBe(2.4);
  });

  it("gives 0 g for zero colonies and refuses colonies without brood boxes", () => {
    expect(doseGramsForYard({ colonies: 0, broodBoxesPerColony: 2 }, 1)).toBe(0);
    expect(() => doseGramsForYard({ colonies: 5, broodBoxesPerColony: 0 }, 1)).toThrow(RangeError);
    expect(doseGramsForVisit([], 1)).toBe(0);
    expect(doseGramsForRun([])).toBe(0);
    expect(doseGramsForSeason([])).toBe(0);
  });

  it("adds a visit colony by colony", () => {
    expect(doseGramsForVisit([1, 2, 3], 1)).toBe(6);
    expect(() => doseGramsForVisit([1, 2, 0, 3], 1)).toThrow(RangeError);
    expect(doseGramsForVisit([1, 2], 0.1)).toBe(0.3);
    expect(() => doseGramsForVisit([1, -1], 1)).toThrow(RangeError);
  });

  it("agrees between a yard and a visit of the same colonies", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 24 }),
        fc.integer({ min: 1, max: 4 }),
        fc.double({ min: 0.01, max: 5, noNaN: true }),
        (colonies, boxes, rate) => {
          const visit = doseGramsForVisit(new Array<number>(colonies).fill(boxes), rate);
          expect(doseGramsForYard({ colonies, broodBoxesPerColony: boxes }, rate)).toBe(visit);
        },
      ),
    );
  });

  it("adds runs and seasons without floating-point drift", () => {
    expect(doseGramsForRun([0.1, 0.2])).toBe(0.3); // plain addition gives 0.30000000000000004
    expect(doseGramsForRun([12, 3.5, 0.25])).toBe(15.75);
    expect(doseGramsForSeason([0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1])).toBe(1);
    expect(() => doseGramsForRun([1, -2])).toThrow(RangeError);
  });

  it("makes a run's total the exact sum of its visits in centigrams", () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: 100_000 }), { maxLength: 40 }), (centigrams) => {
        const total = doseGramsForRun(centigrams.map(centigramsToGrams));
        expect(gramsToCentigrams(total)).toBe(centigrams.reduce((a, b) => a + b, 0));
      }),
    );
  });
});

describe("rounding helpers", () => {
  it("converts grams and centigrams", () => {
    expect(gramsToCentigrams(1.005)).toBe(101);
    expect(gramsToCentigrams(-0.001)).toBe(0);
    expect(Object.is(gramsToCentigrams(-0.001), 0)).toBe(true);
    expect(centigramsToGrams(250)).toBe(2.5);
    expect(roundDoseGrams(2.345)).toBe(2.35);
    expect(() => gramsToCentigrams(Number.NaN)).toThrow(RangeError);
  });
});

describe("dose rate against the label maximum", () => {
  it("accepts the default 1 g under a 1 g label maximum", () => {
    // Source: US label, 1 g per brood chamber.
    expect(doseRateProblems(1, 1)).toEqual([]);
    expect(isDoseRateWithinLabel(1, 1)).toBe(true);
  });

  it("accepts up to 4 g where the business entered the amended label's 4 g", () => {
    // Source: amended US label (2025): up to 4 g per brood chamber.
    expect(doseRateProblems(4, 4)).toEqual([]);
    expect(doseRateProblems(4.01, 4)).toHaveLength(1);
  });

  it("flags a rate above the label maximum entered, as the one problem an owner may confirm", () => {
    const problems = doseRateProblems(2, 1);
    expect(problems).toHaveLength(1);
    expect(problems[0].message).toMatch(/label/i);
    expect(problems[0].aboveLabel).toBe(true);
    expect(isDoseRateWithinLabel(2, 1)).toBe(false);
  });

  it("ignores float noise below 0.01 g", () => {
    expect(doseRateProblems(0.1 + 0.2, 0.3)).toEqual([]);
    expect(doseRateProblems(1.000000001, 1)).toEqual([]);
  });

  it("refuses a zero or missing rate or maximum", () => {
    expect(doseRateProblems(0, 1)).toHaveLength(1);
    expect(doseRateProblems(0, 1)[0].aboveLabel).toBe(false);
    expect(doseRateProblems(1, 0)).toHaveLength(1);
    expect(doseRateProblems(Number.NaN, Number.NaN)).toHaveLength(2);
  });
});
