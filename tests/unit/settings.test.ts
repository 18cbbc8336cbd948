import { describe, expect, it } from "vitest";
import { checkVaporizerBand } from "~/domain/chemistry";
import { doseRateProblems } from "~/domain/dose";
import { monthsWithSeveralThresholds, monthsWithoutThreshold, thresholdOn } from "~/domain/mites";
import {
  DEFAULT_MITE_THRESHOLDS,
  businessSettingsSchema,
  defaultBusinessSettings,
  doseRatesAboveLabel,
  registrationNumberProblem,
  registrationNumberShown,
  settingsFieldInfo,
  validateBusinessSettings,
} from "~/domain/settings";
import { milesPerHourToKilometresPerHour } from "~/domain/units";

const errorsFor = (input: Record<string, unknown>) => {
  const result = validateBusinessSettings(input);
  if (result.ok) throw new Error("expected the settings to be refused");
  return result.fieldErrors;
};

describe("default settings", () => {
  const d = defaultBusinessSettings;

  it("doses 1 g per brood box with a label maximum of 1 g", () => {
    // Source: US label EPA Reg. No. 73291-2 before its 2025 amendment: 1 g per brood chamber.
    expect(d.doseGramsPerBroodBox).toBe(1);
    expect(d.labelMaximumGramsPerBroodBox).toBe(1);
    expect(doseRateProblems(d.doseGramsPerBroodBox, d.labelMaximumGramsPerBroodBox)).toEqual([]);
  });

  it("names the active ingredient but leaves the registration number empty until the owner enters it", () => {
    expect(d.productName).toBe("Oxalic acid dihydrate");
    // No real product's number as a default: it would be printed on records of a product never used.
    expect(d.productRegistrationNumber).toBe("");
    expect(registrationNumberProblem(d)).toMatch(/Enter the registration number/);
    expect(registrationNumberProblem({ productRegistrationNumber: "  " })).toMatch(/Enter the registration number/);
    expect(registrationNumberProblem({ productRegistrationNumber: "REG-1" })).toBeNull();
    expect(registrationNumberShown("")).toMatch(/not entered yet/);
    expect(registrationNumberShown("REG-1")).toBe("REG-1");
  });

  it("plans 3 rounds a week apart", () => {
    // common practice: 3 rounds 5–7 days apart
    expect(d.roundsWithBrood).toBe(3);
    expect(d.roundIntervalDays).toBeGreaterThanOrEqual(5);
    expect(d.roundIntervalDays).toBeLessThanOrEqual(7);
  });

  it("covers every month with one threshold from the named sources", () => {
    expect(monthsWithoutThreshold(d.miteThresholds)).toEqual([]);
    expect(monthsWithSeveralThresholds(d.miteThresholds)).toEqual([]);
    // Source: Mississippi State Univ. Extension — early season (February) 1 per 100 bees.
    expect(thresholdOn("2026-02-15", d.miteThresholds)).toBe(1);
    // Source: Honey Bee Health Coalition — autumn (Aug–Oct) 2–3 per 100 bees.
    for (const date of ["2026-08-01", "2026-09-15", "2026-10-31"]) {
      const t = thresholdOn(date, d.miteThresholds);
      expect(t).toBeGreaterThanOrEqual(2);
      expect(t).toBeLessThanOrEqual(3);
    }
    // Source: USDA-ARS Carl Hayden Bee Research Center — general 3 per 100 bees.
    expect(thresholdOn("2026-12-15", d.miteThresholds)).toBe(3);
    expect(d.miteThresholds).toEqual(DEFAULT_MITE_THRESHOLDS);
  });

  it("counts about 300 bees per 100 mL", () => {
    // Source: COLOSS BEEBOOK Vol. II (Dietemann et al. 2013): ~300 bees ≈ 100 mL.
    expect(d.beesPer100Ml).toBe(300);
  });

  it("times the hive cycle from common practice", () => {
    // common practice: a dose sublimates in roughly 30–40 s; entrance closed about 10 minutes
    expect(d.sublimationSeconds).toBeGreaterThanOrEqual(30);
    expect(d.sublimationSeconds).toBeLessThanOrEqual(40);
    expect(d.entranceClosedMinutes).toBe(10);
    expect(d.setupMinutes).toBeGreaterThan(0);
    expect(d.vaporizersPerCrew).toBeGreaterThanOrEqual(1);
  });

  it("runs the block at 230–240 °C, which passes the band check", () => {
    // common practice: block temperature about 230–240 °C
    expect([d.blockMinC, d.blockMaxC]).toEqual([230, 240]);
    expect(checkVaporizerBand({ minC: d.blockMinC, maxC: d.blockMaxC })).toEqual([]);
  });

  it("estimates drives with a circuity of 1.2 at about 37 mph", () => {
    // Source: Ballou et al. 2002 (from memory): circuity about 1.2 in the USA.
    expect(d.circuityFactor).toBe(1.2);
    // Source: Pew Research Center 2018: rural trips average about 37 mph.
    expect(Math.abs(d.averageSpeedKmh - milesPerHourToKilometresPerHour(37))).toBeLessThan(1);
  });

  it("keeps the business in New York time and money in whole cents", () => {
    expect(d.timeZone).toBe("America/New_York");
    for (const key of ["pricePerColonyCents", "tripFeeCents", "minimumPerVisitCents", "taxRateBasisPoints"] as const) {
      expect(Number.isInteger(d[key])).toBe(true);
      expect(d[key]).toBeGreaterThanOrEqual(0);
    }
    expect(d.paymentTermsDays).toBeGreaterThan(0);
    expect(d.overdueReminderDays).toBeGreaterThan(0);
  });

  it("is what an empty input parses to, and parses again unchanged", () => {
    expect(businessSettingsSchema.parse({})).toEqual(d);
    expect(businessSettingsSchema.parse(d)).toEqual(d);
  });
});

describe("validation messages per field", () => {
  it("puts a dose above the label maximum on the dose field", () => {
    const errors = errorsFor({ doseGramsPerBroodBox: 2, labelMaximumGramsPerBroodBox: 1 });
    expect(Object.keys(errors)).toEqual(["doseGramsPerBroodBox"]);
    expect(errors.doseGramsPerBroodBox?.[0]).toMatch(/label maximum/);
  });

  it("accepts up to 4 g when the business entered the amended label's 4 g", () => {
    // Source: amended US label (2025-06-24, as reported): up to 4 g per brood chamber.
    const result = validateBusinessSettings({ doseGramsPerBroodBox: 4, labelMaximumGramsPerBroodBox: 4 });
    expect(result.ok).toBe(true);
    expect(errorsFor({ doseGramsPerBroodBox: 4.5, labelMaximumGramsPerBroodBox: 4 })).toHaveProperty("doseGramsPerBroodBox");
  });

  it("puts a block band below sublimation on the lowest temperature", () => {
    const errors = errorsFor({ blockMinC: 150 });
    expect(Object.keys(errors)).toEqual(["blockMinC"]);
    expect(errors.blockMinC?.[0]).toMatch(/157/);
  });

  it("puts an upside-down band on the highest temperature", () => {
    expect(Object.keys(errorsFor({ blockMinC: 240, blockMaxC: 230 }))).toEqual(["blockMaxC"]);
  });

  it("lets a band outside common practice through (warnings only)", () => {
    expect(validateBusinessSettings({ blockMinC: 200, blockMaxC: 250 }).ok).toBe(true);
  });

  it("refuses thresholds that leave months out or cover them twice", () => {
    const gap = errorsFor({ miteThresholds: [{ fromMonth: 1, toMonth: 6, mitesPer100: 2 }] });
    expect(gap.miteThresholds?.[0]).toMatch(/July.*December/);
    const overlap = errorsFor({
      miteThresholds: [
        { fromMonth: 1, toMonth: 6, mitesPer100: 2 },
        { fromMonth: 6, toMonth: 12, mitesPer100: 3 },
      ],
    });
    expect(overlap.miteThresholds?.[0]).toMatch(/June/);
    expect(errorsFor({ miteThresholds: [{ fromMonth: 0, toMonth: 12, mitesPer100: 2 }] })).toHaveProperty("miteThresholds");
    expect(validateBusinessSettings({ miteThresholds: [{ fromMonth: 1, toMonth: 12, mitesPer100: 2 }] }).ok).toBe(true);
  });

  it("takes thresholds to the 0.1 mites per 100 bees that loads are shown and compared at", () => {
    const result = businessSettingsSchema.safeParse({ miteThresholds: [{ fromMonth: 1, toMonth: 12, mitesPer100: 2.35 }] });
    expect(result.success).toBe(false);
    expect(result.error!.issues.map((i) => i.message)).toContain("Enter the threshold to one decimal place, e.g. 2.5 mites per 100 bees.");
    for (const ok of [0.1, 2.4, 0.1 + 0.2, 12.5]) {
      expect(validateBusinessSettings({ miteThresholds: [{ fromMonth: 1, toMonth: 12, mitesPer100: ok }] }).ok).toBe(true);
    }
  });

  it("keeps the interval between 4 and 10 days and the rounds whole", () => {
    expect(validateBusinessSettings({ roundIntervalDays: 4, roundsWithBrood: 4 }).ok).toBe(true);
    expect(validateBusinessSettings({ roundIntervalDays: 10 }).ok).toBe(true);
    expect(errorsFor({ roundIntervalDays: 3 }).roundIntervalDays?.[0]).toMatch(/at least 4/);
    expect(errorsFor({ roundIntervalDays: 11 }).roundIntervalDays?.[0]).toMatch(/at most 10/);
    expect(errorsFor({ roundsWithBrood: 2.5 }).roundsWithBrood?.[0]).toMatch(/whole number/);
    expect(errorsFor({ roundsWithBrood: 0 })).toHaveProperty("roundsWithBrood");
  });

  it("refuses a course with brood that does not span the capped-brood period", () => {
    // Source: Winston 1987, The Biology of the Honey Bee — a worker cell stays capped 12 days (from memory).
    // 3 rounds 5 days apart span 10 days: a cell capped just after round 1 opens after round 3.
    expect(errorsFor({ roundsWithBrood: 3, roundIntervalDays: 5 }).roundsWithBrood?.[0]).toMatch(/span 10 days.*at least 12 days/);
    // At both figures: the owner may have changed either.
    expect(errorsFor({ roundsWithBrood: 3, roundIntervalDays: 5 }).roundIntervalDays?.[0]).toMatch(/span 10 days.*at least 12 days/);
    // An empty field (NaN from the form) does not hide the rules between the others.
    const withEmpty = errorsFor({ roundsWithBrood: 3, roundIntervalDays: 5, doseGramsPerMediumBox: Number.NaN, blockMinC: Number.NaN });
    expect(withEmpty.doseGramsPerMediumBox?.[0]).toMatch(/^Enter the dose per medium box as a number/i);
    expect(withEmpty.blockMinC?.[0]).toMatch(/as a number/);
    expect(withEmpty.roundsWithBrood?.[0]).toMatch(/span 10 days/);
    expect(withEmpty).not.toHaveProperty("blockMaxC");
    // 3 rounds 6 days apart span exactly 12 days; the default 3 × 7 spans 14.
    expect(validateBusinessSettings({ roundsWithBrood: 3, roundIntervalDays: 6, maxApplicationsPerColonyPerSeason: 4 }).ok).toBe(true);
    expect(validateBusinessSettings({}).ok).toBe(true);
    // One round with brood spans nothing.
    expect(errorsFor({ roundsWithBrood: 1 }).roundsWithBrood?.[0]).toMatch(/One round spans 0 days/);
    // 7 rounds 5 days apart (a 2022 trial's schedule) span 30 days.
    // Source: Berry et al. 2022, J. Insect Sci., PMC8825467.
    expect(validateBusinessSettings({ roundsWithBrood: 7, roundIntervalDays: 5, maxApplicationsPerColonyPerSeason: 8 }).ok).toBe(true);
  });

  it("allows at least a whole course's applications per colony per season", () => {
    expect(errorsFor({ roundsWithBrood: 3, maxApplicationsPerColonyPerSeason: 2 }).maxApplicationsPerColonyPerSeason?.[0]).toMatch(/at least 3/);
    expect(validateBusinessSettings({ roundsWithBrood: 3, maxApplicationsPerColonyPerSeason: 3 }).ok).toBe(true);
    expect(errorsFor({ maxApplicationsPerColonyPerSeason: 0 })).toHaveProperty("maxApplicationsPerColonyPerSeason");
  });

  it("needs the air temperature band's top above its bottom", () => {
    expect(errorsFor({ airTempMinC: 10, airTempMaxC: 10 }).airTempMaxC?.[0]).toMatch(/above the lowest/);
    expect(errorsFor({ airTempMinC: 10, airTempMaxC: 10 }).airTempMinC?.[0]).toMatch(/below the highest/);
    expect(validateBusinessSettings({ airTempMinC: -5, airTempMaxC: 35 }).ok).toBe(true);
  });

  it("saves a dose rate above the label maximum only with the owner's confirmation, for every box type", () => {
    expect(errorsFor({ doseGramsPerMediumBox: 1.5, labelMaximumGramsPerBroodBox: 1 }).doseGramsPerMediumBox?.[0]).toMatch(/label maximum.*tick/i);
    expect(errorsFor({ doseGramsPerNucBox: 1.2 }).doseGramsPerNucBox?.[0]).toMatch(/label maximum/);
    const confirmed = validateBusinessSettings({ doseGramsPerBroodBox: 2, labelMaximumGramsPerBroodBox: 1, doseAboveLabelConfirmed: true });
    expect(confirmed.ok).toBe(true);
    if (confirmed.ok) expect(doseRatesAboveLabel(confirmed.settings).map((r) => r.boxType)).toEqual(["deep"]);
    // A confirmation never excuses a rate of 0.
    expect(errorsFor({ doseGramsPerBroodBox: 0, doseAboveLabelConfirmed: true })).toHaveProperty("doseGramsPerBroodBox");
    expect(doseRatesAboveLabel(defaultBusinessSettings)).toEqual([]);
  });

  it("sets the guards' and box rates' defaults from the trade's habits", () => {
    const d = defaultBusinessSettings;
    // common practice: a course of 3 rounds with brood and one broodless round in winter = 4
    // applications per colony per season.
    expect(d.maxApplicationsPerColonyPerSeason).toBe(d.roundsWithBrood + 1);
    expect(d.maxApplicationsPerColonyPerSeason).toBe(4);
    // common practice, from memory: bees cluster tightly below about 4 °C (40 °F); about 30 °C
    // (86 °F) at the top.
    expect([d.airTempMinC, d.airTempMaxC]).toEqual([4, 30]);
    // common practice: small pan vaporizers take about 1–2 g a load.
    expect(d.vaporizerLoadGrams).toBeGreaterThanOrEqual(1);
    expect(d.vaporizerLoadGrams).toBeLessThanOrEqual(2);
    // common practice: a box's rate scaled by its volume; Langstroth depths 9⅝ in (deep) and
    // 6⅝ in (medium), from memory: 6.625 / 9.625 = 0.688… ≈ 0.7 of the deep rate.
    expect(d.doseGramsPerMediumBox / d.doseGramsPerBroodBox).toBeCloseTo(6.625 / 9.625, 1);
    // common practice: a five-frame nuc takes about half a ten-frame deep's dose (5 / 10).
    expect(d.doseGramsPerNucBox / d.doseGramsPerBroodBox).toBe(5 / 10);
  });

  it("keeps application records 2 years unless the business sets longer", () => {
    // Source: US EPA certification rule, restricted-use records kept ≥ 2 years, as summarised by pesticidestewardship.org.
    expect(defaultBusinessSettings.recordRetentionYears).toBe(2);
    expect(errorsFor({ recordRetentionYears: 0 })).toHaveProperty("recordRetentionYears");
  });

  it("refuses fractional cents, unknown time zones, unit systems and non-numbers", () => {
    expect(errorsFor({ pricePerColonyCents: 25.5 })).toHaveProperty("pricePerColonyCents");
    expect(errorsFor({ timeZone: "Mars/Olympus_Mons" })).toHaveProperty("timeZone");
    expect(errorsFor({ unitSystem: "imperial" })).toHaveProperty("unitSystem");
    expect(errorsFor({ circuityFactor: 0.8 })).toHaveProperty("circuityFactor");
    expect(errorsFor({ averageSpeedKmh: Number.NaN })).toHaveProperty("averageSpeedKmh");
    expect(errorsFor({ sublimationSeconds: "35" })).toHaveProperty("sublimationSeconds");
  });

  it("collects several fields' messages at once and keeps other fields quiet", () => {
    const errors = errorsFor({ doseGramsPerBroodBox: 3, setupMinutes: -1, taxRateBasisPoints: 1.5 });
    expect(Object.keys(errors).sort()).toEqual(["doseGramsPerBroodBox", "setupMinutes", "taxRateBasisPoints"]);
  });

  it("reports a non-object as a form error", () => {
    const result = validateBusinessSettings(null);
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.formErrors.length).toBeGreaterThan(0);
  });
});

describe("settingsFieldInfo", () => {
  it("describes every setting and nothing else", () => {
    expect(Object.keys(settingsFieldInfo).sort()).toEqual(Object.keys(defaultBusinessSettings).sort());
    for (const info of Object.values(settingsFieldInfo)) {
      expect(info.label.trim().length).toBeGreaterThan(0);
      expect(info.explanation.trim().length).toBeGreaterThan(0);
      expect(info.explanation).not.toContain("\n");
      if (info.source !== undefined) expect(info.source.trim().length).toBeGreaterThan(0);
    }
  });

  it("names the sources of the figures that have one", () => {
    expect(settingsFieldInfo.doseGramsPerBroodBox.source).toMatch(/73291-2/);
    expect(settingsFieldInfo.labelMaximumGramsPerBroodBox.source).toMatch(/4 g/);
    expect(settingsFieldInfo.beesPer100Ml.source).toMatch(/BEEBOOK/);
    expect(settingsFieldInfo.miteThresholds.source).toMatch(/Honey Bee Health Coalition/);
    expect(settingsFieldInfo.circuityFactor.source).toMatch(/Ballou/);
    expect(settingsFieldInfo.averageSpeedKmh.source).toMatch(/Pew/);
    expect(settingsFieldInfo.doseGramsPerBroodBox.unit).toBe("g");
  });
});
