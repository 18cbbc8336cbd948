import type { TimeWindow } from "./planner";

/** A customer's time preference for a visit. */
export type VisitTimePreference = "any" | "morning" | "afternoon";

/** Minutes from midnight at which morning windows end and afternoon ones begin. */
export const NOON_MIN = 12 * 60;

/**
 * A visit's service window from its time preference and the working hours of the day's crews
 * (8:00–17:00 when no crew works): mornings end at noon, afternoons start there, "any" is the
 * whole working day.
 */
export function windowForPreference(preference: VisitTimePreference, crews: readonly { workStartMin: number; workEndMin: number }[]): TimeWindow {
  const dayStart = crews.length > 0 ? Math.min(...crews.map((c) => c.workStartMin)) : 8 * 60;
  const dayEnd = crews.length > 0 ? Math.max(...crews.map((c) => c.workEndMin)) : 17 * 60;
  switch (preference) {
    case "morning":
      return { startMin: Math.min(dayStart, NOON_MIN), endMin: NOON_MIN };
    case "afternoon":
      return { startMin: NOON_MIN, endMin: Math.max(dayEnd, NOON_MIN) };
    default:
      return { startMin: dayStart, endMin: dayEnd };
  }
}
