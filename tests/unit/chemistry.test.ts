import { describe, expect, it } from "vitest";
import {
  ANHYDROUS_DECOMPOSITION_POINT_C,
  ANHYDROUS_PER_DIHYDRATE,
  ANHYDROUS_SUBLIMATION_POINT_C,
  ATOMIC_WEIGHTS,
  COMMON_BLOCK_BAND_C,
  DIHYDRATE_MELTING_POINT_C,
  OXALIC_ACID_ANHYDROUS_MOLAR_MASS,
  OXALIC_ACID_DIHYDRATE_MOLAR_MASS,
  anhydrousEquivalentGrams,
  checkVaporizerBand,
  dihydrateEquivalentGrams,
  molarMass,
} from "~/domain/chemistry";

describe("atomic weights and molar masses", () => {
  it("uses the IUPAC conventional atomic weights", () => {
    // Source: IUPAC standard atomic weights (H 1.008, C 12.011, O 15.999), per sources.md.
    expect(ATOMIC_WEIGHTS).toEqual({ H: 1.008, C: 12.011, O: 15.999 });
  });

  it("gives 90.034 g/mol for anhydrous oxalic acid", () => {
    // Source: IUPAC atomic weights; C2H2O4 = 90.034 g/mol (sources.md, H).
    expect(OXALIC_ACID_ANHYDROUS_MOLAR_MASS).toBeCloseTo(90.034, 9);
  });

  it("gives 126.064 g/mol for the dihydrate", () => {
    // Source: IUPAC atomic weights; C2H2O4·2H2O = 126.064 g/mol (sources.md, H).
    expect(OXALIC_ACID_DIHYDRATE_MOLAR_MASS).toBeCloseTo(126.064, 9);
  });

  it("makes the dihydrate the anhydrous acid plus two waters", () => {
    const water = molarMass({ H: 2, O: 1 });
    expect(water).toBeCloseTo(18.015, 9);
    expect(OXALIC_ACID_DIHYDRATE_MOLAR_MASS - OXALIC_ACID_ANHYDROUS_MOLAR_MASS).toBeCloseTo(2 * water, 9);
  });

  it("has an anhydrous/dihydrate mass ratio of 0.71419", () => {
    // Source: computed from IUPAC weights, 0.71419 (sources.md, H).
    expect(ANHYDROUS_PER_DIHYDRATE).toBeCloseTo(0.71419, 5);
  });

  it("rejects impossible atom counts", () => {
    expect(() => molarMass({ C: -1 })).toThrow(RangeError);
    expect(() => molarMass({ O: 1.5 })).toThrow(RangeError);
    expect(molarMass({})).toBe(0);
  });
});

describe("dihydrate ↔ anhydrous equivalence", () => {
  it("turns 886 mg of dihydrate into about 632.7 mg of oxalic acid", () => {
    // Source: EU summary of product characteristics, oxalic acid dihydrate 886 mg/g (UK VMD, 2015):
    // 886 mg dihydrate = 632.70 mg anhydrous. The IUPAC weights give 632.77 mg; the summary's
    // figure differs by 0.07 mg (0.01 %), so the check allows 0.1 mg.
    const mg = anhydrousEquivalentGrams(0.886) * 1000;
    expect(Math.abs(mg - 632.7)).toBeLessThan(0.1);
  });

  it("goes back and forth", () => {
    expect(dihydrateEquivalentGrams(anhydrousEquivalentGrams(2))).toBeCloseTo(2, 12);
    expect(anhydrousEquivalentGrams(0)).toBe(0);
    expect(dihydrateEquivalentGrams(OXALIC_ACID_ANHYDROUS_MOLAR_MASS)).toBeCloseTo(OXALIC_ACID_DIHYDRATE_MOLAR_MASS, 9);
  });

  it("rejects negative or non-finite masses", () => {
    expect(() => anhydrousEquivalentGrams(-1)).toThrow(RangeError);
    expect(() => dihydrateEquivalentGrams(Number.NaN)).toThrow(RangeError);
  });
});

describe("physical constants", () => {
  it("holds the handbook temperatures", () => {
    // Source: standard handbooks (dihydrate melts 101.5 °C, H); chemical data sheets
    // (sublimes ~157 °C, decomposes ~189.5 °C, M).
    expect(DIHYDRATE_MELTING_POINT_C).toBe(101.5);
    expect(ANHYDROUS_SUBLIMATION_POINT_C).toBe(157);
    expect(ANHYDROUS_DECOMPOSITION_POINT_C).toBe(189.5);
    // common practice: block at about 230–240 °C
    expect(COMMON_BLOCK_BAND_C).toEqual({ minC: 230, maxC: 240 });
  });
});

describe("checkVaporizerBand", () => {
  it("accepts the common-practice band of 230–240 °C", () => {
    // common practice: block temperature about 230–240 °C
    expect(checkVaporizerBand({ minC: 230, maxC: 240 })).toEqual([]);
  });

  it("does not treat the decomposition point as an error", () => {
    const problems = checkVaporizerBand({ minC: 200, maxC: 235 });
    expect(problems.filter((p) => p.severity === "error")).toEqual([]);
    expect(problems).toEqual([expect.objectContaining({ field: "minC", severity: "warning" })]);
  });

  it("warns above the common band, without blocking", () => {
    const problems = checkVaporizerBand({ minC: 230, maxC: 260 });
    expect(problems).toEqual([expect.objectContaining({ field: "maxC", severity: "warning" })]);
  });

  it("refuses a band reaching down to the dihydrate's melting point", () => {
    const problems = checkVaporizerBand({ minC: DIHYDRATE_MELTING_POINT_C, maxC: 240 });
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatchObject({ field: "minC", severity: "error" });
    expect(problems[0].message).toContain("101.5");
  });

  it("refuses a band reaching down to the sublimation point", () => {
    for (const minC of [150, ANHYDROUS_SUBLIMATION_POINT_C]) {
      const problems = checkVaporizerBand({ minC, maxC: 240 });
      expect(problems).toHaveLength(1);
      expect(problems[0]).toMatchObject({ field: "minC", severity: "error" });
      expect(problems[0].message).toContain("157");
    }
    const justAbove = checkVaporizerBand({ minC: ANHYDROUS_SUBLIMATION_POINT_C + 1, maxC: 240 });
    expect(justAbove.filter((p) => p.severity === "error")).toEqual([]);
  });

  it("refuses min not below max", () => {
    expect(checkVaporizerBand({ minC: 240, maxC: 230 })).toEqual([
      expect.objectContaining({ field: "maxC", severity: "error" }),
    ]);
    expect(checkVaporizerBand({ minC: 235, maxC: 235 })).toEqual([
      expect.objectContaining({ field: "maxC", severity: "error" }),
    ]);
  });

  it("refuses non-numbers on the right end", () => {
    expect(checkVaporizerBand({ minC: Number.NaN, maxC: 240 })).toEqual([
      expect.objectContaining({ field: "minC", severity: "error" }),
    ]);
    expect(checkVaporizerBand({ minC: 230, maxC: Number.POSITIVE_INFINITY })).toEqual([
      expect.objectContaining({ field: "maxC", severity: "error" }),
    ]);
  });
});
