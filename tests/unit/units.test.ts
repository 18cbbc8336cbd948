import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  GRAMS_PER_OUNCE,
  METRES_PER_MILE,
  celsiusToFahrenheit,
  fahrenheitToCelsius,
  formatClockTime,
  formatDistance,
  formatDose,
  formatDuration,
  formatMass,
  formatTemperature,
  gramsToOunces,
  kilometresPerHourToMetresPerSecond,
  kilometresToMetres,
  kilometresToMiles,
  metresToKilometres,
  metresToMiles,
  milesPerHourToKilometresPerHour,
  milesToKilometres,
  minutesToSeconds,
  ouncesToGrams,
  parseClockTime,
  roundTo,
  secondsToMinutes,
} from "~/domain/units";

describe("conversions", () => {
  it("converts grams and ounces", () => {
    // Source: international yard and pound agreement (1959): 1 lb = 0.45359237 kg exactly, 16 oz to the lb.
    expect(ouncesToGrams(16)).toBeCloseTo(453.59237, 9);
    expect(gramsToOunces(453.59237)).toBeCloseTo(16, 9);
    expect(gramsToOunces(0)).toBe(0);
    expect(GRAMS_PER_OUNCE * 16).toBeCloseTo(453.59237, 9);
  });

  it("converts Celsius and Fahrenheit", () => {
    // Source: definition of the Fahrenheit scale (water freezes at 32 °F, boils at 212 °F at 1 atm).
    expect(celsiusToFahrenheit(0)).toBe(32);
    expect(celsiusToFahrenheit(100)).toBe(212);
    expect(celsiusToFahrenheit(-40)).toBe(-40);
    expect(fahrenheitToCelsius(212)).toBe(100);
    expect(fahrenheitToCelsius(98.6)).toBeCloseTo(37, 10);
  });

  it("round-trips Celsius ↔ Fahrenheit and grams ↔ ounces", () => {
    fc.assert(
      fc.property(fc.double({ min: -1000, max: 1000, noNaN: true }), (x) => {
        expect(fahrenheitToCelsius(celsiusToFahrenheit(x))).toBeCloseTo(x, 9);
        expect(ouncesToGrams(gramsToOunces(x))).toBeCloseTo(x, 9);
      }),
    );
  });

  it("converts kilometres, metres and miles", () => {
    // Source: international mile = 1609.344 m exactly (1959 agreement).
    expect(kilometresToMiles(1.609344)).toBeCloseTo(1, 12);
    expect(milesToKilometres(26.2)).toBeCloseTo(42.1648128, 9);
    expect(metresToMiles(METRES_PER_MILE * 3)).toBeCloseTo(3, 12);
    expect(metresToKilometres(1500)).toBe(1.5);
    expect(kilometresToMetres(2.5)).toBe(2500);
  });

  it("converts seconds, minutes and speeds", () => {
    expect(secondsToMinutes(90)).toBe(1.5);
    expect(minutesToSeconds(2.5)).toBe(150);
    expect(kilometresPerHourToMetresPerSecond(36)).toBe(10);
    // Source: Pew Research Center 2018, rural trip ≈ 37 mph; 37 mph = 37 × 1.609344 km/h.
    expect(milesPerHourToKilometresPerHour(37)).toBeCloseTo(59.545728, 9);
  });
});

describe("roundTo", () => {
  it("rounds decimals as written, not as stored in binary", () => {
    expect(roundTo(1.005, 2)).toBe(1.01); // 1.005.toFixed(2) gives "1.00"
    expect(roundTo(2.675, 2)).toBe(2.68); // 2.675.toFixed(2) gives "2.67"
    expect(roundTo(0.1 + 0.2, 2)).toBe(0.3);
    expect(roundTo(13.8709677, 1)).toBe(13.9);
  });

  it("rounds halves away from zero and never returns −0", () => {
    expect(roundTo(2.5, 0)).toBe(3);
    expect(roundTo(-2.5, 0)).toBe(-3);
    expect(roundTo(-1.005, 2)).toBe(-1.01);
    expect(Object.is(roundTo(-0.001, 2), 0)).toBe(true);
  });

  it("handles exponent-form numbers and rejects bad decimals", () => {
    expect(roundTo(1e-7, 2)).toBe(0);
    expect(roundTo(1e21, 2)).toBe(1e21);
    expect(() => roundTo(1, -1)).toThrow(RangeError);
    expect(() => roundTo(1, 1.5)).toThrow(RangeError);
  });

  it("stays within half a unit of the last place", () => {
    fc.assert(
      fc.property(fc.double({ min: -1e6, max: 1e6, noNaN: true }), fc.integer({ min: 0, max: 4 }), (x, d) => {
        expect(Math.abs(roundTo(x, d) - x)).toBeLessThanOrEqual(0.5 * 10 ** -d + 1e-9);
      }),
    );
  });
});

describe("display formatters", () => {
  it("formats masses in metric", () => {
    expect(formatMass(1, "metric")).toBe("1 g");
    expect(formatMass(12.5, "metric")).toBe("12.5 g");
    expect(formatMass(999.994, "metric")).toBe("999.99 g");
    expect(formatMass(1500, "metric")).toBe("1.5 kg");
    expect(formatMass(1_234_500, "metric")).toBe("1,234.5 kg");
  });

  it("formats masses in US units", () => {
    // Source: 1 oz = 28.349523125 g; 1 lb = 16 oz (1959 agreement).
    expect(formatMass(28.349523125, "us")).toBe("1 oz");
    expect(formatMass(453.59237, "us")).toBe("1 lb");
    expect(formatMass(1, "us")).toBe("0.04 oz"); // 1 / 28.3495 = 0.0353
    expect(formatMass(0, "us")).toBe("0 oz");
  });

  it("formats doses with grams first", () => {
    expect(formatDose(2, "metric")).toBe("2 g");
    expect(formatDose(2, "us")).toBe("2 g (0.07 oz)"); // 2 / 28.3495 = 0.0705
  });

  it("formats temperatures", () => {
    // Source: Fahrenheit definition; 230 °C × 9/5 + 32 = 446 °F; 101.5 °C = 214.7 °F.
    expect(formatTemperature(230, "metric")).toBe("230 °C");
    expect(formatTemperature(230, "us")).toBe("446 °F");
    expect(formatTemperature(101.5, "us")).toBe("214.7 °F");
    expect(formatTemperature(-40, "us")).toBe("-40 °F");
  });

  it("formats distances", () => {
    expect(formatDistance(850, "metric")).toBe("850 m");
    expect(formatDistance(12_345, "metric")).toBe("12.3 km");
    expect(formatDistance(1_234_000, "metric")).toBe("1,234 km");
    expect(formatDistance(METRES_PER_MILE, "us")).toBe("1 mi");
    expect(formatDistance(10 * METRES_PER_MILE, "us")).toBe("10 mi");
    expect(formatDistance(30.48, "us")).toBe("100 ft"); // 100 ft = 30.48 m exactly
    expect(formatDistance(0, "us")).toBe("0 ft");
  });

  it("formats durations in hours and minutes", () => {
    expect(formatDuration(0)).toBe("0 min");
    expect(formatDuration(45)).toBe("45 min");
    expect(formatDuration(59.6)).toBe("1 h");
    expect(formatDuration(60)).toBe("1 h");
    expect(formatDuration(125)).toBe("2 h 05 min");
    expect(formatDuration(-5)).toBe("-5 min");
  });

  it("formats and parses clock times", () => {
    expect(formatClockTime(510)).toBe("08:30");
    expect(formatClockTime(0)).toBe("00:00");
    expect(parseClockTime("17:45")).toBe(17 * 60 + 45);
    expect(parseClockTime("24:00")).toBe(1440);
    expect(() => parseClockTime("24:30")).toThrow(RangeError);
    expect(() => parseClockTime("8:30")).toThrow(RangeError);
    expect(() => formatClockTime(-1)).toThrow(RangeError);
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 1440 }), (m) => {
        expect(parseClockTime(formatClockTime(m))).toBe(m);
      }),
    );
  });

  it("refuses non-finite figures", () => {
    expect(() => formatMass(Number.NaN, "metric")).toThrow(RangeError);
    expect(() => formatDistance(Number.POSITIVE_INFINITY, "us")).toThrow(RangeError);
    expect(() => formatDuration(Number.NaN)).toThrow(RangeError);
    expect(() => formatTemperature(Number.NaN, "us")).toThrow(RangeError);
  });
});
