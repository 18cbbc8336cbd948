import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  crewColonyLimit,
  crewDayCapacityColonies,
  dayCapacityColonies,
  dayCapacityGrams,
  gramsBookedFor,
  gramsFit,
  gramsForColonies,
  gramsStillFitting,
  leastColonyDoseGrams,
  yardDoseGramsPerColony,
} from "~/domain/capacity";
import { defaultBusinessSettings } from "~/domain/settings";

// Rates as a business might set them: a label's 1 g per deep brood box, less for the smaller
// boxes (common practice: about 0.7 of a deep for a medium, half for a five-frame nuc).
const rates = { doseGramsPerBroodBox: 1, doseGramsPerMediumBox: 0.7, doseGramsPerNucBox: 0.5 };
// The service-time figures only shape the estimate; the default settings' are as good as any.
const { doseGramsPerBroodBox: _deep, doseGramsPerMediumBox: _medium, doseGramsPerNucBox: _nuc, ...timing } = defaultBusinessSettings;
const longDay = { workMinutes: 12 * 60, vaporizers: 4 };

describe("the colony figure from a crew's gram limit", () => {
  it("takes the least dose a colony can take: one box of the type with the smallest rate", () => {
    expect(leastColonyDoseGrams(rates)).toBe(0.5);
    expect(leastColonyDoseGrams({ ...rates, doseGramsPerNucBox: 1.2 })).toBe(0.7);
    expect(leastColonyDoseGrams({ doseGramsPerBroodBox: 1 })).toBe(1);
    expect(leastColonyDoseGrams({})).toBeUndefined();
  });

  it("stays an upper bound: 10 g covers 20 nuc colonies, so the colony figure allows 20", () => {
    const crew = { ...longDay, maxDoseGramsPerDay: 10 };
    const settings = { ...timing, ...rates };
    expect(crewColonyLimit(crew, leastColonyDoseGrams(settings))).toBe(20);
    // Default times, 4 vaporizers: a typical yard of 5 colonies is 2 cycles,
    // 15 + 2 × 35/60 + 1 × 2 + 10 = 28.17 min, + 20 min drive = 48.17 min. 720 − 20 (drive
    // home) = 700: 700 / 48.17 = 14.53 → 14 yards = 70 colonies, 25.67 min left (a 1-colony
    // yard needs 15 + 35/60 + 10 + 20 = 45.58) → 70; capped at the gram limit's 20 → 20.
    expect(crewDayCapacityColonies({ ...longDay }, settings)).toBe(70);
    expect(crewDayCapacityColonies(crew, settings)).toBe(20);
    // With only the deep rate known, 10 g is 10 colonies, as before box types: min(10, 70) = 10.
    expect(crewDayCapacityColonies(longDay, timing)).toBe(70);
    expect(crewDayCapacityColonies(crew, { ...timing, doseGramsPerBroodBox: 1 })).toBe(10);
    expect(dayCapacityColonies([crew, crew], settings, { closed: false, capacityOverride: 100 })).toBe(40);
  });

  it("never counts fewer colonies than the grams can cover, whatever the yards' boxes", () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 20000 }), fc.constantFrom("deep", "medium", "nuc" as const), fc.integer({ min: 1, max: 6 }), (centigrams, boxType, boxes) => {
        const limitGrams = centigrams / 100;
        const colonyLimit = crewColonyLimit({ maxDoseGramsPerDay: limitGrams }, leastColonyDoseGrams(rates));
        // Every count the grams really cover stays within the colony figure.
        const perColony = yardDoseGramsPerColony({ boxType, broodBoxesPerColony: boxes }, rates);
        const covered = Math.floor(Math.round(limitGrams * 100) / Math.round(perColony * 100));
        expect(covered).toBeLessThanOrEqual(colonyLimit);
      }),
    );
  });
});

describe("a day's gram capacity", () => {
  it("adds the working crews' gram limits up", () => {
    expect(dayCapacityGrams([{ maxDoseGramsPerDay: 12.5 }, { maxDoseGramsPerDay: 30 }])).toBe(42.5);
    // In centigrams: 0.1 + 0.2 is 0.3, not 0.30000000000000004.
    expect(dayCapacityGrams([{ maxDoseGramsPerDay: 0.1 }, { maxDoseGramsPerDay: 0.2 }])).toBe(0.3);
  });

  it("has no gram bound when a working crew has no gram limit, or no crew works", () => {
    expect(dayCapacityGrams([{ maxDoseGramsPerDay: 12 }, { maxDoseGramsPerDay: null }])).toBeNull();
    expect(dayCapacityGrams([{ maxDoseGramsPerDay: 12 }, {}])).toBeNull();
    expect(dayCapacityGrams([])).toBeNull();
  });

  it("is 0 on a closed day", () => {
    expect(dayCapacityGrams([{ maxDoseGramsPerDay: 12 }], { closed: true })).toBe(0);
    expect(dayCapacityGrams([{ maxDoseGramsPerDay: null }], { closed: true })).toBe(0);
  });

  it("leaves what is not booked, never below 0, and none when unbound", () => {
    expect(gramsStillFitting(20, 11.3)).toBe(8.7);
    expect(gramsStillFitting(20, 25)).toBe(0);
    expect(gramsStillFitting(null, 25)).toBeNull();
  });

  it("fits grams to the centigram, and anything when unbound", () => {
    expect(gramsFit(8.7, 8.7)).toBe(true);
    expect(gramsFit(8.71, 8.7)).toBe(false);
    expect(gramsFit(0.1 + 0.2, 0.3)).toBe(true);
    expect(gramsFit(1000, null)).toBe(true);
  });
});

describe("grams a yard's colonies take", () => {
  it("is colonies × brood boxes × the box type's rate", () => {
    // 2 medium boxes at 0.7 g: 1.4 g a colony; 10 colonies take 14 g, not the 10 g of one deep each.
    expect(yardDoseGramsPerColony({ boxType: "medium", broodBoxesPerColony: 2 }, rates)).toBe(1.4);
    expect(gramsForColonies(10, { boxType: "medium", broodBoxesPerColony: 2 }, rates)).toBe(14);
    expect(gramsForColonies(3, { boxType: "nuc", broodBoxesPerColony: 1 }, rates)).toBe(1.5);
    expect(gramsForColonies(0, { boxType: "deep", broodBoxesPerColony: 2 }, rates)).toBe(0);
  });

  it("adds a day's visits up in centigrams", () => {
    const visits = [
      { colonies: 10, boxType: "medium" as const, broodBoxesPerColony: 2 },
      { colonies: 3, boxType: "nuc" as const, broodBoxesPerColony: 1 },
      { colonies: 7, boxType: "deep" as const, broodBoxesPerColony: 1 },
    ];
    expect(gramsBookedFor(visits, rates)).toBe(22.5);
    expect(gramsBookedFor([], rates)).toBe(0);
    expect(gramsBookedFor([{ colonies: 3, boxType: "deep", broodBoxesPerColony: 1 }], { ...rates, doseGramsPerBroodBox: 0.1 })).toBe(0.3);
  });
});
