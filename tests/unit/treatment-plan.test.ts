import { describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings, type BusinessSettings } from "~/domain/settings";
import { yardTreatmentPlan } from "~/domain/treatment-plan";

const settings: BusinessSettings = { ...defaultBusinessSettings, doseGramsPerBroodBox: 1, roundsWithBrood: 3, roundIntervalDays: 7 };

describe("yardTreatmentPlan", () => {
  it("doses each colony per brood box and adds the rounds up", () => {
    const plan = yardTreatmentPlan({ colonies: 5, broodBoxesPerColony: 2, broodStatus: "brood" }, settings, { firstDate: "2026-10-26" });
    // Source: US label EPA Reg. No. 73291-2, 1 g per brood chamber (as cited in Tellarini Prieto et al. 2024)
    expect(plan.dosePerColonyGrams).toBe(2);
    expect(plan.dosePerRoundGrams).toBe(10);
    expect(plan.doseForCourseGrams).toBe(30);
    // Source: molar masses from IUPAC atomic weights: 90.034 / 126.064 g/mol
    expect(plan.anhydrousPerRoundGrams).toBeCloseTo(10 * (90.034 / 126.064), 2);
  });

  it("plans one round for a broodless yard and the configured rounds with brood, across month and DST ends", () => {
    const broodless = yardTreatmentPlan({ colonies: 3, broodBoxesPerColony: 1, broodStatus: "broodless" }, settings, { firstDate: "2026-12-01" });
    expect(broodless.rounds.map((r) => r.date)).toEqual(["2026-12-01"]);
    const brood = yardTreatmentPlan({ colonies: 3, broodBoxesPerColony: 1, broodStatus: "brood" }, settings, { firstDate: "2026-10-26" });
    // US daylight saving ends 2026-11-01: calendar days still step by 7.
    expect(brood.rounds.map((r) => r.date)).toEqual(["2026-10-26", "2026-11-02", "2026-11-09"]);
    expect(brood.roundsBooked).toBe(false);
  });

  it("shows a booked course's own rounds and leaves cancelled rounds out of the acid needed", () => {
    const booked = [
      { roundNumber: 1, date: "2026-11-02", status: "done" as const },
      { roundNumber: 2, date: "2026-11-10", status: "cancelled" as const },
      { roundNumber: 3, date: "2026-11-17", status: "scheduled" as const },
    ];
    const plan = yardTreatmentPlan({ colonies: 4, broodBoxesPerColony: 1, broodStatus: "brood" }, settings, { firstDate: "2026-12-01", bookedRounds: booked });
    expect(plan.roundsBooked).toBe(true);
    expect(plan.rounds).toEqual(booked);
    expect(plan.doseForCourseGrams).toBe(8);
  });

  it("follows the dose rate and the crew's vaporizers from the settings", () => {
    const yard = { colonies: 6, broodBoxesPerColony: 1, broodStatus: "broodless" as const };
    const plan = yardTreatmentPlan(yard, { ...settings, doseGramsPerBroodBox: 2.5, labelMaximumGramsPerBroodBox: 4, vaporizerLoadGrams: 2 }, { firstDate: "2026-12-01", vaporizers: 3 });
    expect(plan.dosePerRoundGrams).toBe(15);
    expect(plan.vaporizers).toBe(3);
    // 2.5 g a colony does not fit one 2 g load: two loads each.
    expect(plan.loadsPerColony).toBe(2);
    // Default times (35 s a dose, gap max(2 min move, 60 s reheat) = 2 min, 15 min set-up,
    // 10 min entrance): 6 colonies × 2 loads on 3 vaporizers = 4 cycles →
    // 15 + 4 × 35/60 + 3 × 2 + 10 = 15 + 2.333… + 6 + 10 = 33.333… min
    expect(plan.serviceMinutesPerRound).toBeCloseTo(100 / 3, 12);
    const slower = yardTreatmentPlan(yard, settings, { firstDate: "2026-12-01", vaporizers: 1 });
    expect(slower.serviceMinutesPerRound).toBeGreaterThan(plan.serviceMinutesPerRound);
  });

  it("needs nothing for a yard with no colonies, and still plans its course", () => {
    const empty = yardTreatmentPlan({ colonies: 0, broodBoxesPerColony: 2, broodStatus: "brood" }, settings, { firstDate: "2026-12-01" });
    expect(empty.dosePerRoundGrams).toBe(0);
    expect(empty.serviceMinutesPerRound).toBe(0);
    expect(addCalendarDays(empty.rounds[0].date, 14)).toBe(empty.rounds[2].date);
  });

  it("reports a block band below the sublimation point", () => {
    const plan = yardTreatmentPlan({ colonies: 1, broodBoxesPerColony: 1, broodStatus: "brood" }, { ...settings, blockMinC: 150, blockMaxC: 240 }, { firstDate: "2026-12-01" });
    // Source: anhydrous oxalic acid sublimes at about 157 °C (chemical data sheets)
    expect(plan.blockBandProblems.some((p) => p.severity === "error" && p.field === "minC")).toBe(true);
  });

  it("doses by the yard's box type and says how: boxes, rate, loads", () => {
    const yard = { colonies: 10, broodBoxesPerColony: 2, broodStatus: "broodless" as const };
    const deep = yardTreatmentPlan(yard, settings, { firstDate: "2026-12-01" });
    expect(deep).toMatchObject({ boxType: "deep", broodBoxesPerColony: 2, doseRateGrams: 1, dosePerColonyGrams: 2 });
    const medium = yardTreatmentPlan({ ...yard, boxType: "medium" }, { ...settings, doseGramsPerMediumBox: 0.7 }, { firstDate: "2026-12-01" });
    // common practice: a medium takes about 0.7 of a deep's dose
    expect(medium).toMatchObject({ boxType: "medium", doseRateGrams: 0.7, dosePerColonyGrams: 1.4, dosePerRoundGrams: 14 });
    expect(medium.doseForCourseGrams).toBe(14);
    const nuc = yardTreatmentPlan({ ...yard, broodBoxesPerColony: 1, boxType: "nuc" }, { ...settings, doseGramsPerNucBox: 0.5 }, { firstDate: "2026-12-01" });
    expect(nuc).toMatchObject({ boxType: "nuc", doseRateGrams: 0.5, dosePerColonyGrams: 0.5, dosePerRoundGrams: 5 });
  });

  it("plans a longer round when a colony's dose takes more than one vaporizer load", () => {
    const yard = { colonies: 8, broodBoxesPerColony: 3, boxType: "deep" as const, broodStatus: "broodless" as const };
    const oneLoad = yardTreatmentPlan(yard, { ...settings, vaporizerLoadGrams: 3 }, { firstDate: "2026-12-01", vaporizers: 2 });
    const twoLoads = yardTreatmentPlan(yard, { ...settings, vaporizerLoadGrams: 2 }, { firstDate: "2026-12-01", vaporizers: 2 });
    expect(oneLoad.loadsPerColony).toBe(1);
    expect(twoLoads.loadsPerColony).toBe(2);
    // 8 colonies × 2 loads on 2 vaporizers = 8 cycles → 15 + 8 × 35/60 + 7 × 2 + 10 = 15 + 4.666… + 14 + 10 = 43.666… min
    expect(twoLoads.serviceMinutesPerRound).toBeCloseTo(131 / 3, 12);
    // one load each: 8 doses on 2 vaporizers = 4 cycles → 15 + 4 × 35/60 + 3 × 2 + 10 = 33.333… min
    expect(oneLoad.serviceMinutesPerRound).toBeCloseTo(100 / 3, 12);
    expect(twoLoads.serviceMinutesPerRound).toBeGreaterThan(oneLoad.serviceMinutesPerRound);
    // The acid is the same; only the time grows.
    expect(twoLoads.dosePerRoundGrams).toBe(oneLoad.dosePerRoundGrams);
  });

  it("refuses to plan colonies without a brood box: a living colony has at least one", () => {
    // common practice: the dose goes by brood box, and a living colony has at least one.
    expect(() => yardTreatmentPlan({ colonies: 4, broodBoxesPerColony: 0, broodStatus: "brood" }, settings, { firstDate: "2026-12-01" })).toThrow(/at least 1 brood box/);
    // The least a colony can have: one deep box, one load, 4 colonies on the default 2 vaporizers
    // = 2 cycles → 15 + 2 × 35/60 + 1 × 2 + 10 = 28.1666… min
    const least = yardTreatmentPlan({ colonies: 4, broodBoxesPerColony: 1, broodStatus: "brood" }, settings, { firstDate: "2026-12-01" });
    expect(least.loadsPerColony).toBe(1);
    expect(least.serviceMinutesPerRound).toBeCloseTo(169 / 6, 12);
  });

  it("plans from the colonies as the crew found them when they differ from the yard, and says so", () => {
    const yard = { colonies: 4, broodBoxesPerColony: 2, boxType: "deep" as const, broodStatus: "broodless" as const };
    const asBooked = yardTreatmentPlan(yard, settings, { firstDate: "2026-12-01", colonies: [2, 2, 2, 2].map((b) => ({ broodBoxes: b, boxType: "deep" as const })) });
    expect(asBooked.crewFindings).toBeNull();
    expect(asBooked).toMatchObject({ dosePerColonyGrams: 2, dosePerRoundGrams: 8, loadsPerColony: 1 });

    // The crew found 3, 1, 1 and 2 deep boxes: 1 g a box → 3 + 1 + 1 + 2 = 7 g a round, 1.75 g a
    // colony on average, and the 3-box colony's 3 g needs two 2 g vaporizer loads.
    const found = [3, 1, 1, 2].map((b) => ({ broodBoxes: b, boxType: "deep" as const }));
    const plan = yardTreatmentPlan(yard, { ...settings, vaporizerLoadGrams: 2 }, { firstDate: "2026-12-01", vaporizers: 2, colonies: found });
    expect(plan).toMatchObject({ dosePerRoundGrams: 7, dosePerColonyGrams: 1.75, loadsPerColony: 2, doseForCourseGrams: 7 });
    expect(plan.crewFindings).toContain("The crew found 2 colonies of 1 deep brood box");
    // 4 colonies × 2 loads on 2 vaporizers = 4 cycles → 15 + 4 × 35/60 + 3 × 2 + 10 = 33.333… min
    expect(plan.serviceMinutesPerRound).toBeCloseTo(100 / 3, 12);
    // Three colonies of 1 deep box (1 g) and one of 1 medium at 0.7 g: 3.7 g ÷ 4 = 0.925 g,
    // rounded up to 0.93 g, so a day is never planned short.
    const mixed = yardTreatmentPlan({ ...yard, broodBoxesPerColony: 1 }, { ...settings, doseGramsPerMediumBox: 0.7 }, {
      firstDate: "2026-12-01",
      colonies: [{ broodBoxes: 1, boxType: "medium" }, ...[1, 1, 1].map((b) => ({ broodBoxes: b, boxType: "deep" as const }))],
    });
    expect(mixed).toMatchObject({ dosePerRoundGrams: 3.7, dosePerColonyGrams: 0.93 });
  });
});
