import { describe, expect, it } from "vitest";
import { doseAssumption, doseGramsForColonyOfType, doseRateForBoxType, isBoxType, vaporizerLoadsForDose } from "~/domain/box-types";
import { defaultBusinessSettings } from "~/domain/settings";
import { serviceMinutesForYard } from "~/domain/service-time";

const rates = { doseGramsPerBroodBox: 1, doseGramsPerMediumBox: 0.7, doseGramsPerNucBox: 0.5 };

describe("dose by box type", () => {
  it("doses a deep brood box at the label's rate per brood chamber", () => {
    // Source: US label EPA Reg. No. 73291-2 before its 2025 amendment: 1 g per brood chamber
    // (as cited in Tellarini Prieto et al. 2024, Front. Bee Sci.).
    expect(doseRateForBoxType(defaultBusinessSettings, "deep")).toBe(1);
    expect(doseGramsForColonyOfType(2, "deep", rates)).toBe(2);
  });

  it("doses medium and nuc boxes at the business's own rates", () => {
    // common practice: a medium holds about two thirds of a deep (box depths 9⅝ and 6⅝ in, from memory).
    expect(defaultBusinessSettings.doseGramsPerMediumBox).toBeCloseTo(6.625 / 9.625, 1);
    expect(doseGramsForColonyOfType(3, "medium", rates)).toBe(2.1);
    // common practice: a five-frame nuc takes about half a ten-frame deep's dose.
    expect(defaultBusinessSettings.doseGramsPerNucBox).toBe(0.5);
    expect(doseGramsForColonyOfType(1, "nuc", rates)).toBe(0.5);
  });

  it("keeps doses to 0.01 g without float drift", () => {
    expect(doseGramsForColonyOfType(3, "medium", { ...rates, doseGramsPerMediumBox: 0.1 + 0.2 })).toBe(0.9);
  });

  it("knows the three box types and nothing else", () => {
    expect(["deep", "medium", "nuc"].every(isBoxType)).toBe(true);
    expect(isBoxType("super")).toBe(false);
    expect(isBoxType(undefined)).toBe(false);
  });
});

describe("vaporizer loads", () => {
  it("gives a dose up to the load in one load, and more in several", () => {
    expect(vaporizerLoadsForDose(2, 2)).toBe(1);
    expect(vaporizerLoadsForDose(2.01, 2)).toBe(2);
    expect(vaporizerLoadsForDose(4, 2)).toBe(2);
    expect(vaporizerLoadsForDose(0, 2)).toBe(0);
    // 0.1 + 0.2 g in a 0.3 g load: one load, not two by float drift.
    expect(vaporizerLoadsForDose(0.1 + 0.2, 0.3)).toBe(1);
    expect(() => vaporizerLoadsForDose(1, 0)).toThrow(RangeError);
  });

  it("says how the dose was worked out", () => {
    expect(doseAssumption({ broodBoxes: 2, boxType: "deep", rates, loadGrams: 2 })).toBe(
      "2 deep brood boxes × 1 g = 2 g, in 1 vaporizer load of at most 2 g",
    );
    expect(doseAssumption({ broodBoxes: 1, boxType: "nuc", rates, loadGrams: 0.4 })).toMatch(/^1 nuc brood box × 0\.5 g = 0\.5 g, in 2 vaporizer loads/);
  });

  it("lengthens the time at a yard when colonies need several loads", () => {
    const yard = {
      colonies: 4,
      vaporizers: 2,
      setupMinutes: 15,
      sublimationSeconds: 36,
      moveBetweenHivesMinutes: 2,
      blockReheatSeconds: 60,
      entranceClosedMinutes: 10,
    };
    const one = serviceMinutesForYard(yard);
    const two = serviceMinutesForYard({ ...yard, loadsPerColony: 2 });
    // 4 colonies on 2 vaporizers: 2 cycles with one load each, 4 cycles with two.
    expect(one).toBeCloseTo(15 + 2 * 0.6 + 1 * 2 + 10, 6);
    expect(two).toBeCloseTo(15 + 4 * 0.6 + 3 * 2 + 10, 6);
    expect(serviceMinutesForYard({ ...yard, loadsPerColony: 1 })).toBe(one);
  });
});
