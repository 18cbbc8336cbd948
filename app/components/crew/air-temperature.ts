import { celsiusToFahrenheit, fahrenheitToCelsius, roundTo, type UnitSystem } from "~/domain/units";

// The air temperature the crew reads at the yard: stored in °C (to 0.1), typed in °C or °F
// as the business's unit system says.

// The range lives with the other guards (a plain module: the crew's page runs under a policy
// without eval, which zod would try); the schema is with the other sync changes (app/forms/sync.ts).
export { AIR_TEMP_MAX_C, AIR_TEMP_MIN_C } from "~/domain/treatment-guards";

/** What the crew typed, in their unit, as °C (to 0.1), or null when it is not a number. */
export function typedAirTempToCelsius(text: string, system: UnitSystem): number | null {
  const trimmed = text.trim().replace(",", ".");
  if (!/^-?\d+(\.\d+)?$/.test(trimmed)) return null;
  const value = Number(trimmed);
  return roundTo(system === "us" ? fahrenheitToCelsius(value) : value, 1);
}

/** A stored °C value as the crew reads it in their unit (to 0.1). */
export function celsiusForDisplay(celsius: number, system: UnitSystem): number {
  return roundTo(system === "us" ? celsiusToFahrenheit(celsius) : celsius, 1);
}

/** The unit sign of the crew's unit system. */
export function temperatureUnit(system: UnitSystem): "°C" | "°F" {
  return system === "us" ? "°F" : "°C";
}
