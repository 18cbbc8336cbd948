import { describe, expect, it } from "vitest";
import { BOX_TYPES, doseGramsForColonyOfType, type BoxType } from "~/domain/box-types";
import { gramsToCentigrams } from "~/domain/dose";
import { gramsAtDosePerColony, plannedColonyDose, plannedDoseGramsPerColony, plannedLoadsPerColony, type ColoniesOfShape } from "~/domain/yard-colony-doses";

// Hand-worked figures at simple rates (not the business's settings): 1 g a deep box,
// 0.7 g a medium, 0.5 g a nuc, vaporizer loads of at most 2 g.
const rates = { doseGramsPerBroodBox: 1, doseGramsPerMediumBox: 0.7, doseGramsPerNucBox: 0.5 };
const settings = { ...rates, vaporizerLoadGrams: 2 };
const deepOneBox = { boxType: "deep" as const, broodBoxesPerColony: 1 };

const colony = (broodBoxes: number, boxType: BoxType = "deep", count?: number): ColoniesOfShape => ({ broodBoxes, boxType, ...(count === undefined ? {} : { count }) });

describe("the dose per colony a yard is planned with", () => {
  it("averages its colonies' doses", () => {
    // 2 deep boxes (2 g) and 3 deep boxes (3 g): (2 + 3) / 2 = 2.5 g.
    expect(plannedDoseGramsPerColony([colony(2), colony(3)], deepOneBox, rates)).toBe(2.5);
    // A medium colony of 2 boxes (1.4 g) and a deep of 1 box (1 g): 2.4 / 2 = 1.2 g.
    expect(plannedDoseGramsPerColony([colony(2, "medium"), colony(1)], deepOneBox, rates)).toBe(1.2);
  });

  it("rounds the average up to the centigram, so a day is never planned short", () => {
    // 1 g, 1 g and 2 g: 4 / 3 = 1.333… g → 1.34 g, not 1.33 g.
    expect(plannedDoseGramsPerColony([colony(1), colony(1), colony(2)], deepOneBox, rates)).toBe(1.34);
    // A nuc (0.5 g), a medium (0.7 g) and a deep (1 g) of one box: 2.2 / 3 = 0.7333… → 0.74 g.
    expect(plannedDoseGramsPerColony([colony(1, "nuc"), colony(1, "medium"), colony(1)], deepOneBox, rates)).toBe(0.74);
  });

  it("weighs each shape by its number of colonies", () => {
    // Three colonies of 1 deep box and one found with 3: (3 × 1 + 3) / 4 = 1.5 g.
    expect(plannedDoseGramsPerColony([colony(1, "deep", 3), colony(3, "deep", 1)], deepOneBox, rates)).toBe(1.5);
    // The same colonies listed one by one give the same.
    expect(plannedDoseGramsPerColony([colony(1), colony(1), colony(1), colony(3)], deepOneBox, rates)).toBe(1.5);
  });

  it("falls back to the yard's own figures when it has no colony", () => {
    expect(plannedDoseGramsPerColony([], { boxType: "medium", broodBoxesPerColony: 2 }, rates)).toBe(1.4);
    expect(plannedDoseGramsPerColony([colony(3, "deep", 0)], { boxType: "nuc", broodBoxesPerColony: 1 }, rates)).toBe(0.5);
    expect(plannedColonyDose([], { boxType: "medium", broodBoxesPerColony: 3 }, settings)).toEqual({ dosePerColonyGrams: 2.1, loadsPerColony: 2, fromColonies: false });
  });

  it("never plans a yard below what its colonies take, nor a centigram per colony above it", () => {
    const shapes = BOX_TYPES.flatMap((boxType) => [1, 2, 3].map((boxes) => colony(boxes, boxType)));
    for (const a of shapes) {
      for (const b of shapes) {
        for (const c of shapes) {
          const list = [a, b, c];
          const exact = list.reduce((sum, s) => sum + gramsToCentigrams(doseGramsForColonyOfType(s.broodBoxes, s.boxType, rates)), 0);
          const planned = 3 * gramsToCentigrams(plannedDoseGramsPerColony(list, deepOneBox, rates));
          expect(planned).toBeGreaterThanOrEqual(exact);
          expect(planned).toBeLessThan(exact + 3);
        }
      }
    }
  });

  it("refuses a count that is not a whole number of colonies", () => {
    expect(() => plannedDoseGramsPerColony([colony(1, "deep", 1.5)], deepOneBox, rates)).toThrow(RangeError);
    expect(() => plannedDoseGramsPerColony([colony(1, "deep", -1)], deepOneBox, rates)).toThrow(RangeError);
  });
});

describe("the vaporizer loads per colony a yard is planned with", () => {
  it("takes the most any colony needs", () => {
    // 1 g is one load of at most 2 g; 3 g is two.
    expect(plannedLoadsPerColony([colony(1, "deep", 3), colony(3)], deepOneBox, settings)).toBe(2);
    // 2 g fills exactly one load; 5 g takes three.
    expect(plannedLoadsPerColony([colony(2)], deepOneBox, settings)).toBe(1);
    expect(plannedLoadsPerColony([colony(1), colony(5), colony(3, "medium")], deepOneBox, settings)).toBe(3);
  });

  it("falls back to the yard's own figures when it has no colony", () => {
    expect(plannedLoadsPerColony([], { boxType: "medium", broodBoxesPerColony: 3 }, settings)).toBe(2);
    expect(plannedLoadsPerColony([], deepOneBox, settings)).toBe(1);
  });

  it("gives both figures from the colonies when there are some", () => {
    expect(plannedColonyDose([colony(1, "deep", 3), colony(3)], deepOneBox, settings)).toEqual({ dosePerColonyGrams: 1.5, loadsPerColony: 2, fromColonies: true });
  });
});

describe("grams for colonies at a planned dose", () => {
  it("multiplies in centigrams", () => {
    expect(gramsAtDosePerColony(4, 1.5)).toBe(6);
    expect(gramsAtDosePerColony(3, 1.34)).toBe(4.02);
    expect(gramsAtDosePerColony(3, 0.1)).toBe(0.3);
    expect(gramsAtDosePerColony(0, 2.5)).toBe(0);
    expect(() => gramsAtDosePerColony(1.5, 1)).toThrow(RangeError);
  });
});
