/**
 * Units and display formatting used on every screen.
 *
 * Varroute stores SI-style base quantities (grams, degrees Celsius, metres, seconds or
 * minutes) and converts only for display. Display text is produced with a fixed
 * "en-US" number format so that server and browser render the same string.
 */

/** The measurement system a business shows its figures in. */
export type UnitSystem = "metric" | "us";

/** Grams in one international avoirdupois ounce (exact by definition, 1959). */
export const GRAMS_PER_OUNCE = 28.349523125;
/** Ounces in one avoirdupois pound. */
export const OUNCES_PER_POUND = 16;
/** Metres in one international mile (exact by definition, 1959). */
export const METRES_PER_MILE = 1609.344;
/** Metres in one international foot (exact by definition). */
export const METRES_PER_FOOT = 0.3048;
/** Millilitres in one US customary cup (8 US fluid ounces). */
export const MILLILITRES_PER_US_CUP = 236.5882365;

/**
 * Rounds to a number of decimals without binary floating-point surprises
 * (1.005 → 1.01, not 1.00), half away from zero.
 */
export function roundTo(value: number, decimals: number): number {
  if (!Number.isFinite(value)) return value;
  if (!Number.isInteger(decimals) || decimals < 0 || decimals > 12) {
    throw new RangeError(`decimals must be an integer 0–12, got ${decimals}`);
  }
  const sign = value < 0 ? -1 : 1;
  const magnitude = Math.abs(value);
  if (magnitude >= 2 ** 52) return value; // already a whole number; scaling would lose digits
  const text = String(magnitude);
  // Shift the decimal point through the shortest decimal form of the number (exact for what
  // was typed or computed), so 1.005 counts as 1.005 and not 1.00499999999999989…
  const shifted = text.includes("e")
    ? Math.round(magnitude * 10 ** decimals)
    : Math.round(Number(`${text}e${decimals}`));
  // Integer ÷ exact power of ten is correctly rounded: the nearest double to the decimal.
  const result = (sign * shifted) / 10 ** decimals;
  return Object.is(result, -0) ? 0 : result;
}

/** Grams → avoirdupois ounces. */
export function gramsToOunces(grams: number): number {
  return grams / GRAMS_PER_OUNCE;
}

/** Avoirdupois ounces → grams. */
export function ouncesToGrams(ounces: number): number {
  return ounces * GRAMS_PER_OUNCE;
}

/** Degrees Celsius → degrees Fahrenheit. */
export function celsiusToFahrenheit(celsius: number): number {
  return (celsius * 9) / 5 + 32;
}

/** Degrees Fahrenheit → degrees Celsius. */
export function fahrenheitToCelsius(fahrenheit: number): number {
  return ((fahrenheit - 32) * 5) / 9;
}

/** Kilometres → international miles. */
export function kilometresToMiles(kilometres: number): number {
  return (kilometres * 1000) / METRES_PER_MILE;
}

/** International miles → kilometres. */
export function milesToKilometres(miles: number): number {
  return (miles * METRES_PER_MILE) / 1000;
}

/** Metres → kilometres. */
export function metresToKilometres(metres: number): number {
  return metres / 1000;
}

/** Kilometres → metres. */
export function kilometresToMetres(kilometres: number): number {
  return kilometres * 1000;
}

/** Metres → international miles. */
export function metresToMiles(metres: number): number {
  return metres / METRES_PER_MILE;
}

/** Seconds → minutes. */
export function secondsToMinutes(seconds: number): number {
  return seconds / 60;
}

/** Minutes → seconds. */
export function minutesToSeconds(minutes: number): number {
  return minutes * 60;
}

/** Kilometres per hour → metres per second. */
export function kilometresPerHourToMetresPerSecond(kmh: number): number {
  return kmh / 3.6;
}

/** Miles per hour → kilometres per hour. */
export function milesPerHourToKilometresPerHour(mph: number): number {
  return milesToKilometres(mph);
}

function formatNumber(value: number, maximumFractionDigits: number, minimumFractionDigits = 0): string {
  return new Intl.NumberFormat("en-US", {
    maximumFractionDigits,
    minimumFractionDigits,
    useGrouping: true,
  }).format(roundTo(value, maximumFractionDigits));
}

function assertFinite(value: number, what: string): void {
  if (!Number.isFinite(value)) throw new RangeError(`${what} must be a finite number, got ${value}`);
}

/**
 * A mass for display: metric "12.5 g" / "1.25 kg" (from 1,000 g);
 * US "0.44 oz" / "2.21 lb" (from 16 oz).
 */
export function formatMass(grams: number, system: UnitSystem): string {
  assertFinite(grams, "grams");
  if (system === "metric") {
    if (Math.abs(grams) >= 1000) return `${formatNumber(grams / 1000, 2)} kg`;
    return `${formatNumber(grams, 2)} g`;
  }
  const ounces = gramsToOunces(grams);
  if (Math.abs(ounces) >= OUNCES_PER_POUND) return `${formatNumber(ounces / OUNCES_PER_POUND, 2)} lb`;
  return `${formatNumber(ounces, 2)} oz`;
}

/**
 * A dose for display. Labels state doses in grams, so grams always lead;
 * the US system adds ounces in brackets: "2 g (0.07 oz)".
 */
export function formatDose(grams: number, system: UnitSystem): string {
  assertFinite(grams, "grams");
  const inGrams = `${formatNumber(grams, 2)} g`;
  if (system === "metric") return inGrams;
  return `${inGrams} (${formatNumber(gramsToOunces(grams), 2)} oz)`;
}

/** A temperature for display, to 0.1 degree: "230 °C" or "446 °F". */
export function formatTemperature(celsius: number, system: UnitSystem): string {
  assertFinite(celsius, "celsius");
  if (system === "metric") return `${formatNumber(celsius, 1)} °C`;
  return `${formatNumber(celsiusToFahrenheit(celsius), 1)} °F`;
}

/**
 * A distance for display: metric "850 m" below 1 km, else "12.3 km";
 * US "650 ft" below 0.1 mi (to 10 ft), else "7.6 mi".
 */
export function formatDistance(metres: number, system: UnitSystem): string {
  assertFinite(metres, "metres");
  if (system === "metric") {
    if (Math.abs(metres) < 1000) return `${formatNumber(metres, 0)} m`;
    return `${formatNumber(metres / 1000, 1)} km`;
  }
  const miles = metresToMiles(metres);
  if (Math.abs(miles) < 0.1) {
    const feet = roundTo(metres / METRES_PER_FOOT / 10, 0) * 10;
    return `${formatNumber(feet, 0)} ft`;
  }
  return `${formatNumber(miles, 1)} mi`;
}

/** A duration for display, rounded to whole minutes: "45 min", "1 h", "2 h 05 min". */
export function formatDuration(minutes: number): string {
  assertFinite(minutes, "minutes");
  const whole = roundTo(minutes, 0);
  if (whole < 0) return `-${formatDuration(-whole)}`;
  const hours = Math.floor(whole / 60);
  const rest = whole % 60;
  if (hours === 0) return `${rest} min`;
  if (rest === 0) return `${formatNumber(hours, 0)} h`;
  return `${formatNumber(hours, 0)} h ${String(rest).padStart(2, "0")} min`;
}

/** Minutes after midnight as a 24-hour clock time: 510 → "08:30" (whole minutes, rounded). */
export function formatClockTime(minutesAfterMidnight: number): string {
  assertFinite(minutesAfterMidnight, "minutesAfterMidnight");
  const whole = roundTo(minutesAfterMidnight, 0);
  if (whole < 0 || whole > 24 * 60) {
    throw new RangeError(`minutes after midnight must lie in 0–1440, got ${minutesAfterMidnight}`);
  }
  const hours = Math.floor(whole / 60);
  const rest = whole % 60;
  return `${String(hours).padStart(2, "0")}:${String(rest).padStart(2, "0")}`;
}

/** Parses a 24-hour "HH:MM" clock time into minutes after midnight ("24:00" allowed as day end). */
export function parseClockTime(text: string): number {
  const match = /^([01]\d|2[0-4]):([0-5]\d)$/.exec(text);
  if (!match) throw new RangeError(`not a HH:MM clock time: ${JSON.stringify(text)}`);
  const minutes = Number(match[1]) * 60 + Number(match[2]);
  if (minutes > 24 * 60) throw new RangeError(`clock time after 24:00: ${text}`);
  return minutes;
}
