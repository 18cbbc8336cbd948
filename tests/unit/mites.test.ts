import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  HALF_US_CUP_ML,
  assessMiteLoad,
  atOrAboveThreshold,
  miteLoadLevel,
  mitesPer100AsShown,
  washSampleBees,
  beesFromSampleVolume,
  beesPer100MlFromHalfCupRule,
  formatMitesPer100,
  mitesPer100Bees,
  monthInSpan,
  monthsWithSeveralThresholds,
  monthsWithoutThreshold,
  percentReduction,
  thresholdOn,
  type MiteThreshold,
} from "~/domain/mites";

// A season written for these tests (not the settings defaults): early 1, summer 2, autumn 3, winter 2.5.
const SEASON: MiteThreshold[] = [
  { fromMonth: 2, toMonth: 4, mitesPer100: 1 },
  { fromMonth: 5, toMonth: 7, mitesPer100: 2 },
  { fromMonth: 8, toMonth: 10, mitesPer100: 3 },
  { fromMonth: 11, toMonth: 1, mitesPer100: 2.5 },
];

describe("mitesPer100Bees", () => {
  it("reproduces the BEEBOOK worked example: 43 mites in 310 bees = 13.9 per 100", () => {
    // Source: COLOSS BEEBOOK Vol. II, Dietemann et al. 2013, J. Apic. Res. 52(1) — recomputed:
    // 43 / 310 × 100 = 13.87…, shown as 13.9.
    expect(mitesPer100Bees(43, 310)).toBeCloseTo(13.87, 2);
    expect(formatMitesPer100(mitesPer100Bees(43, 310))).toBe("13.9");
  });

  it("gives 3.0 for 9 mites in 300 bees and 2.25 for 9 in 400", () => {
    // Source: arithmetic from the COLOSS BEEBOOK sample sizes (sources.md check values, H).
    expect(mitesPer100Bees(9, 300)).toBe(3);
    expect(formatMitesPer100(mitesPer100Bees(9, 300))).toBe("3.0");
    expect(mitesPer100Bees(9, 400)).toBe(2.25);
  });

  it("gives 0 for a clean wash", () => {
    expect(mitesPer100Bees(0, 300)).toBe(0);
  });

  it("rejects an empty sample and impossible counts", () => {
    expect(() => mitesPer100Bees(3, 0)).toThrow(RangeError);
    expect(() => mitesPer100Bees(-1, 300)).toThrow(RangeError);
    expect(() => mitesPer100Bees(1.5, 300)).toThrow(RangeError);
  });

  it("grows with mites and shrinks with bees", () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 200 }), fc.integer({ min: 1, max: 1000 }), (mites, bees) => {
        expect(mitesPer100Bees(mites + 1, bees)).toBeGreaterThan(mitesPer100Bees(mites, bees));
        expect(mitesPer100Bees(mites, bees + 1)).toBeLessThanOrEqual(mitesPer100Bees(mites, bees));
      }),
    );
  });
});

describe("bees from a sample volume", () => {
  it("counts about 300 bees in 100 mL", () => {
    // Source: COLOSS BEEBOOK, ~300 bees ≈ 100 mL.
    expect(beesFromSampleVolume(100, 300)).toBe(300);
    expect(beesFromSampleVolume(50, 300)).toBe(150);
  });

  it("turns the half-cup rules of 300 and 400 bees into rates per 100 mL", () => {
    // Source: US customary cup = 236.5882365 mL (NIST Handbook 44); half cup ≈ 300 bees (popular rule,
    // Lee et al. 2010, Univ. of Minnesota) or ≈ 400 bees (Mississippi State Univ. Extension).
    expect(HALF_US_CUP_ML).toBeCloseTo(118.29411825, 8);
    for (const bees of [300, 400]) {
      const rate = beesPer100MlFromHalfCupRule(bees);
      expect(beesFromSampleVolume(HALF_US_CUP_ML, rate)).toBe(bees);
    }
    expect(beesPer100MlFromHalfCupRule(300)).toBeCloseTo(253.6, 1);
  });

  it("estimates a half-cup sample within the published half-cup figures", () => {
    // Source: ~300 bees ≈ 100 mL (COLOSS BEEBOOK Vol. II, Dietemann et al. 2013), the default
    // bees per 100 mL; ½ US cup = 118.29 mL (NIST Handbook 44) ≈ 300 bees (popular rule, Lee et
    // al. 2010, Univ. of Minnesota) or ≈ 400 bees (Mississippi State Univ. Extension).
    // 118.29 × 300 / 100 = 354.9 → 355 bees: inside the 300–400 the half-cup rules give.
    const bees = beesFromSampleVolume(HALF_US_CUP_ML, 300);
    expect(bees).toBe(355);
    expect(bees).toBeGreaterThanOrEqual(300);
    expect(bees).toBeLessThanOrEqual(400);
    // 9 mites in that half cup: 9 × 100 / 355 = 2.535… → "2.5" per 100.
    expect(formatMitesPer100(mitesPer100Bees(9, bees))).toBe("2.5");
  });

  it("uses the bees counted when there are any, and the volume otherwise", () => {
    expect(washSampleBees({ beesCounted: 310, sampleMl: 118.3 }, 300)).toEqual({ beesSampled: 310, beesEstimated: false, sampleMl: 118.3 });
    expect(washSampleBees({ beesCounted: 310, sampleMl: null }, 300)).toEqual({ beesSampled: 310, beesEstimated: false, sampleMl: null });
    expect(washSampleBees({ beesCounted: null, sampleMl: 100 }, 300)).toEqual({ beesSampled: 300, beesEstimated: true, sampleMl: 100 });
    expect(washSampleBees({ beesCounted: null, sampleMl: 118.3 }, 400)).toEqual({ beesSampled: 473, beesEstimated: true, sampleMl: 118.3 });
    expect(washSampleBees({ beesCounted: null, sampleMl: null }, 300)).toBeNull();
  });

  it("rejects empty volumes and rates", () => {
    expect(() => beesFromSampleVolume(0, 300)).toThrow(RangeError);
    expect(() => beesFromSampleVolume(100, 0)).toThrow(RangeError);
    expect(() => beesPer100MlFromHalfCupRule(-300)).toThrow(RangeError);
  });
});

describe("seasonal thresholds", () => {
  it("finds the span a month falls in, including spans over the year end", () => {
    expect(monthInSpan(3, { fromMonth: 2, toMonth: 4 })).toBe(true);
    expect(monthInSpan(5, { fromMonth: 2, toMonth: 4 })).toBe(false);
    expect(monthInSpan(12, { fromMonth: 11, toMonth: 1 })).toBe(true);
    expect(monthInSpan(1, { fromMonth: 11, toMonth: 1 })).toBe(true);
    expect(monthInSpan(2, { fromMonth: 11, toMonth: 1 })).toBe(false);
  });

  it("picks the threshold of the sample date's month", () => {
    expect(thresholdOn("2026-04-30", SEASON)).toBe(1);
    expect(thresholdOn("2026-05-01", SEASON)).toBe(2);
    expect(thresholdOn("2026-12-31", SEASON)).toBe(2.5);
    expect(thresholdOn("2027-01-01", SEASON)).toBe(2.5);
  });

  it("refuses a month no threshold covers, and a bad date", () => {
    expect(() => thresholdOn("2026-06-15", [{ fromMonth: 8, toMonth: 10, mitesPer100: 3 }])).toThrow(RangeError);
    expect(() => thresholdOn("2026-02-30", SEASON)).toThrow(RangeError);
  });

  it("reports gaps and overlaps", () => {
    expect(monthsWithoutThreshold(SEASON)).toEqual([]);
    expect(monthsWithSeveralThresholds(SEASON)).toEqual([]);
    expect(monthsWithoutThreshold([{ fromMonth: 3, toMonth: 10, mitesPer100: 3 }])).toEqual([1, 2, 11, 12]);
    expect(
      monthsWithSeveralThresholds([
        { fromMonth: 1, toMonth: 6, mitesPer100: 1 },
        { fromMonth: 6, toMonth: 12, mitesPer100: 3 },
      ]),
    ).toEqual([6]);
  });
});

describe("assessMiteLoad", () => {
  it("calls a load exactly at the threshold 'at'", () => {
    // Source: 9 mites in 300 bees = 3.0 per 100 (sources.md); autumn threshold 3 per 100
    // (upper end of 2–3, Honey Bee Health Coalition). 9 / 300 × 100 is 3.0000000000000004 in
    // binary, which must not read as "above".
    const at = assessMiteLoad(9, 300, "2026-09-15", SEASON);
    expect(at).toMatchObject({ threshold: 3, level: "at" });
    expect(at.mitesPer100).toBeCloseTo(3, 12);
    expect(formatMitesPer100(at.mitesPer100)).toBe("3.0");
  });

  it("calls loads either side 'below' and 'above'", () => {
    expect(assessMiteLoad(8, 300, "2026-09-15", SEASON).level).toBe("below");
    expect(assessMiteLoad(10, 300, "2026-09-15", SEASON).level).toBe("above");
  });

  it("uses the season's threshold: 2.25 is above in spring, below in autumn", () => {
    // Source: 9 in 400 = 2.25 (sources.md); early-season threshold 1 per 100 (Mississippi State Univ. Extension).
    expect(assessMiteLoad(9, 400, "2026-02-10", SEASON)).toEqual({ mitesPer100: 2.25, threshold: 1, level: "above" });
    expect(assessMiteLoad(9, 400, "2026-10-31", SEASON).level).toBe("below");
    expect(assessMiteLoad(9, 400, "2026-11-01", SEASON).level).toBe("below"); // 2.25 < 2.5
  });

  it("keeps the load unrounded, and compares it as shown (one decimal)", () => {
    // Source: COLOSS BEEBOOK Vol. II (Dietemann et al. 2013) worked example: 43 in 310 = 13.87… → 13.9
    const load = assessMiteLoad(43, 310, "2026-08-01", SEASON).mitesPer100;
    expect(load).toBeCloseTo(13.8709677, 6);
    expect(formatMitesPer100(load)).toBe("13.9");
    // 7 mites in 300 bees = 2.333…, shown "2.3": "at" a threshold written as 2.33 (shown "2.3").
    const thresholds = [{ fromMonth: 1, toMonth: 12, mitesPer100: 2.33 }];
    expect(assessMiteLoad(7, 300, "2026-08-01", thresholds).level).toBe("at");
  });

  it("rounds once, so the figure shown and the verdict agree", () => {
    // 53 mites in 1798 bees = 2.9477… per 100: shown "2.9", below an autumn threshold of 3.
    // (Rounded to 0.01 first it would be 2.95, then "3.0" and "at" — a second rounding.)
    const below = assessMiteLoad(53, 1798, "2026-09-15", SEASON);
    expect(formatMitesPer100(below.mitesPer100)).toBe("2.9");
    expect(below.level).toBe("below");
    // 67 in 2200 = 3.0454…: shown "3.0" and "at" (2 × 0.01 rounding would make it 3.05 → "3.1", above).
    const at = assessMiteLoad(67, 2200, "2026-09-15", SEASON);
    expect(formatMitesPer100(at.mitesPer100)).toBe("3.0");
    expect(at.level).toBe("at");
  });

  it("does not call a load shown as 3.0 'above' a threshold of 3", () => {
    // 38 mites in 1250 bees = 3.04 per 100, shown "3.0": at the autumn threshold of 3, not above.
    const a = assessMiteLoad(38, 1250, "2026-09-15", SEASON);
    expect(formatMitesPer100(a.mitesPer100)).toBe("3.0");
    expect(a).toEqual({ mitesPer100: 3.04, threshold: 3, level: "at" });
    // 37 in 1250 = 2.96, shown "3.0": at, not below.
    expect(assessMiteLoad(37, 1250, "2026-09-15", SEASON).level).toBe("at");
  });

  it("is 'at' whenever mites × 100 / bees equals the threshold", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 30 }), fc.integer({ min: 1, max: 20 }), (threshold, scale) => {
        // threshold per 100 bees, sample of 100 × scale bees holding threshold × scale mites
        const thresholds = [{ fromMonth: 1, toMonth: 12, mitesPer100: threshold / 10 }];
        const bees = 1000 * scale;
        const mites = threshold * scale;
        expect(assessMiteLoad(mites, bees, "2026-06-01", thresholds).level).toBe("at");
      }),
    );
  });
});

describe("comparing a load with a threshold at the shown precision", () => {
  it("rounds to one decimal, as formatMitesPer100 shows it", () => {
    expect(mitesPer100AsShown(3.04)).toBe(3);
    expect(mitesPer100AsShown(3.05)).toBe(3.1);
    expect(mitesPer100AsShown(2.25)).toBe(2.3);
    expect(mitesPer100AsShown(1.15)).toBe(1.2); // 1.15 is 1.1499… in binary; shown and compared as 1.2
    // [load, shown, text]: to one decimal, halves away from zero (13.87 → 13.9; 1.15 and 2.25 are halves).
    const cases: [number, number, string][] = [
      [0, 0, "0.0"],
      [0.04, 0, "0.0"],
      [2.96, 3, "3.0"],
      [3.04, 3, "3.0"],
      [3.05, 3.1, "3.1"],
      [13.87, 13.9, "13.9"],
      [1.15, 1.2, "1.2"],
      [2.25, 2.3, "2.3"],
    ];
    for (const [load, shown, text] of cases) {
      expect(mitesPer100AsShown(load)).toBe(shown);
      expect(formatMitesPer100(load)).toBe(text);
    }
  });

  it("is 'at' on both sides of the boundary that rounds to the threshold", () => {
    expect(miteLoadLevel(3.04, 3)).toBe("at");
    expect(miteLoadLevel(3.049, 3)).toBe("at");
    expect(miteLoadLevel(2.95, 3)).toBe("at");
    expect(miteLoadLevel(3.05, 3)).toBe("above");
    expect(miteLoadLevel(2.94, 3)).toBe("below");
    expect(miteLoadLevel(3.0000000000000004, 3)).toBe("at");
  });

  it("rounds a threshold with more decimals the same way", () => {
    expect(miteLoadLevel(2.3, 2.33)).toBe("at");
    expect(miteLoadLevel(2.4, 2.33)).toBe("above");
    expect(miteLoadLevel(2.2, 2.33)).toBe("below");
  });

  it("agrees with what people read: equal shown figures are 'at', larger shown figures 'above'", () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 5000 }), fc.integer({ min: 1, max: 500 }), (hundredths, thresholdTenths) => {
        const load = hundredths / 100;
        const threshold = thresholdTenths / 10;
        // The shown figure in whole tenths, worked in integers (no floating point): hundredths
        // to tenths, a half (…5) rounded up — 304 → 30, 305 → 31, 115 → 12.
        const shownTenths = Math.floor((hundredths + 5) / 10);
        expect(formatMitesPer100(load)).toBe(`${Math.floor(shownTenths / 10)}.${shownTenths % 10}`);
        const expected = shownTenths < thresholdTenths ? "below" : shownTenths === thresholdTenths ? "at" : "above";
        expect(miteLoadLevel(load, threshold)).toBe(expected);
        expect(atOrAboveThreshold(load, threshold)).toBe(expected !== "below");
      }),
    );
  });

  it("refuses negative or missing figures", () => {
    expect(() => miteLoadLevel(-1, 3)).toThrow(RangeError);
    expect(() => miteLoadLevel(Number.NaN, 3)).toThrow(RangeError);
    expect(() => miteLoadLevel(1, Number.POSITIVE_INFINITY)).toThrow(RangeError);
  });
});

describe("percentReduction", () => {
  it("gives the share of mites removed by a course", () => {
    expect(percentReduction(10, 1)).toBeCloseTo(90, 10);
    expect(percentReduction(5, 0)).toBe(100);
    expect(percentReduction(3, 3)).toBe(0);
  });

  it("goes negative when the load rose, and is null without a before-count", () => {
    expect(percentReduction(4, 6)).toBe(-50);
    expect(percentReduction(0, 2)).toBeNull();
  });

  it("uses mites per 100 from two washes", () => {
    // 43/310 before, 9/400 after: (13.871 − 2.25) / 13.871 = 83.8 %
    const value = percentReduction(mitesPer100Bees(43, 310), mitesPer100Bees(9, 400));
    expect(value).not.toBeNull();
    expect(value!).toBeCloseTo(83.78, 2);
  });

  it("rejects negative loads", () => {
    expect(() => percentReduction(-1, 0)).toThrow(RangeError);
    expect(() => percentReduction(1, Number.NaN)).toThrow(RangeError);
  });
});
