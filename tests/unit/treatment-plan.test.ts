import { describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings, type BusinessSettings } from "~/domain/settings";
import { serviceMinutesForYard } from "~/domain/service-time";
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
    const plan = yardTreatmentPlan(yard, { ...settings, doseGramsPerBroodBox: 2.5, labelMaximumGramsPerBroodBox: 4 }, { firstDate: "2026-12-01", vaporizers: 3 });
    expect(plan.dosePerRoundGrams).toBe(15);
    expect(plan.vaporizers).toBe(3);
    expect(plan.serviceMinutesPerRound).toBe(
      serviceMinutesForYard({ ...settings, colonies: 6, vaporizers: 3 }),
    );
    const slower = yardTreatmentPlan(yard, settings, { firstDate: "2026-12-01", vaporizers: 1 });
    expect(slower.serviceMinutesPerRound).toBeGreaterThan(plan.serviceMinutesPerRound);
  });

  it("needs nothing for a yard with no colonies or no brood boxes", () => {
    const empty = yardTreatmentPlan({ colonies: 0, broodBoxesPerColony: 2, broodStatus: "brood" }, settings, { firstDate: "2026-12-01" });
    expect(empty.dosePerRoundGrams).toBe(0);
    expect(empty.serviceMinutesPerRound).toBe(0);
    const noBoxes = yardTreatmentPlan({ colonies: 4, broodBoxesPerColony: 0, broodStatus: "brood" }, settings, { firstDate: "2026-12-01" });
    expect(noBoxes.dosePerColonyGrams).toBe(0);
    expect(addCalendarDays(noBoxes.rounds[0].date, 14)).toBe(noBoxes.rounds[2].date);
  });

  it("reports a block band below the sublimation point", () => {
    const plan = yardTreatmentPlan({ colonies: 1, broodBoxesPerColony: 1, broodStatus: "brood" }, { ...settings, blockMinC: 150, blockMaxC: 240 }, { firstDate: "2026-12-01" });
    // Source: anhydrous oxalic acid sublimes at about 157 °C (chemical data sheets)
    expect(plan.blockBandProblems.some((p) => p.severity === "error" && p.field === "minC")).toBe(true);
  });
});
