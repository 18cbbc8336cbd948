import { describe, expect, it } from "vitest";
import { airTemperatureWarning, applicationCapProblem, CAPPED_BROOD_DAYS, courseDatesSpanProblem, plannedCourseSpanProblem, projectedCourseSpanDays } from "~/domain/treatment-guards";

describe("course span against the capped-brood period", () => {
  it("takes the capped stage of a worker cell as the span to cover", () => {
    // Source: Winston 1987, The Biology of the Honey Bee — egg 3 d, open larva 6 d, capped 12 d (from memory).
    expect(CAPPED_BROOD_DAYS).toBe(21 - 3 - 6);
  });

  it("accepts common schedules and refuses short ones", () => {
    // common practice: 3 rounds 5–7 days apart.
    expect(plannedCourseSpanProblem(3, 7)).toBeNull();
    expect(plannedCourseSpanProblem(3, 6)).toBeNull();
    expect(plannedCourseSpanProblem(3, 5)).toMatch(/span 10 days/);
    expect(plannedCourseSpanProblem(2, 10)).toMatch(/span 10 days/);
    expect(plannedCourseSpanProblem(1, 7)).toMatch(/0 days/);
  });

  it("checks the dates of a course's rounds, in any order", () => {
    expect(courseDatesSpanProblem(["2026-06-01", "2026-06-08", "2026-06-15"])).toBeNull();
    expect(courseDatesSpanProblem(["2026-06-11", "2026-06-01", "2026-06-06"])).toMatch(/10 days/);
    // Across a month end: 2026-01-25 → 2026-02-06 is 12 days.
    expect(courseDatesSpanProblem(["2026-01-25", "2026-02-06"])).toBeNull();
    expect(courseDatesSpanProblem(["2026-06-01"])).toBeNull();
  });
});

describe("applications per colony per season", () => {
  it("allows applications below the cap and refuses at it", () => {
    expect(applicationCapProblem("H1", 3, 4)).toBeNull();
    expect(applicationCapProblem("H1", 4, 4)).toMatch(/H1 has had 4 applications.*\(4\)/);
    expect(applicationCapProblem("H2", 1, 1)).toMatch(/1 application this season/);
  });
});

describe("air temperature band", () => {
  const band = { airTempMinC: 4, airTempMaxC: 30 };
  it("warns outside the band, never at its ends", () => {
    expect(airTemperatureWarning(4, band)).toBeNull();
    expect(airTemperatureWarning(30, band)).toBeNull();
    expect(airTemperatureWarning(3.9, band)).toMatch(/below/);
    expect(airTemperatureWarning(31, band)).toMatch(/above/);
    expect(() => airTemperatureWarning(Number.NaN, band)).toThrow(RangeError);
    // In the crew's units: 3.9 °C is 39.0 °F (× 9/5 + 32, the Celsius–Fahrenheit definition), the band 39.2–86 °F.
    expect(airTemperatureWarning(3.9, band, "us")).toMatch(/^39 °F is below the business's band for treating \(39\.2–86 °F\)/);
    expect(airTemperatureWarning(3.9, band, "metric")).toMatch(/^3\.9 °C is below the business's band for treating \(4–30 °C\)/);
    expect(airTemperatureWarning(31, band, "us")).toMatch(/^87\.8 °F is above/);
  });
});

describe("projected course span", () => {
  it("counts the rounds not yet on the calendar at the course's interval", () => {
    expect(projectedCourseSpanDays(["2026-06-01"], 3, 7)).toBe(14);
    expect(projectedCourseSpanDays(["2026-06-01", "2026-06-06"], 3, 7)).toBe(12);
    expect(projectedCourseSpanDays(["2026-06-01", "2026-06-08", "2026-06-15"], 3, 7)).toBe(14);
    expect(projectedCourseSpanDays([], 3, 7)).toBe(0);
  });
});
