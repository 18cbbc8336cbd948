/**
 * How many colonies a service day can take, before its routes are planned.
 *
 * Bookings are taken weeks ahead, when the day's route does not exist yet, so the room
 * left on a day is estimated: each crew's working day is filled with "typical" yards
 * (the business's typical colonies per yard), each costing its service time (set-up,
 * doses, the final entrance wait; see service-time.ts) plus the average drive between
 * yards, with one more drive back at the end of the day. Leftover time takes a smaller
 * yard if one fits. The route planner later uses real drive times and may defer what
 * does not fit after all; the estimate errs on the side of what a crew can really do.
 */
import { serviceMinutesForYard, type HiveCycle } from "./service-time";

export interface CapacitySettings extends HiveCycle {
  setupMinutes: number;
  typicalColoniesPerYard: number;
  averageDriveMinutesBetweenYards: number;
}

export interface CrewForCapacity {
  workMinutes: number;
  vaporizers: number;
}

/** Colonies one crew can treat in its working day, by the estimate above. */
export function crewDayCapacityColonies(crew: CrewForCapacity, settings: CapacitySettings): number {
  if (!Number.isFinite(crew.workMinutes) || crew.workMinutes <= 0) return 0;
  const drive = settings.averageDriveMinutesBetweenYards;
  let minutesLeft = crew.workMinutes - drive; // the drive home at the end of the day
  const yardMinutes = (colonies: number) =>
    serviceMinutesForYard({ ...settings, colonies, vaporizers: crew.vaporizers }) + drive;
  const typical = settings.typicalColoniesPerYard;
  const typicalMinutes = yardMinutes(typical);
  let colonies = 0;
  if (typicalMinutes > 0) {
    const yards = Math.max(0, Math.floor(minutesLeft / typicalMinutes));
    colonies += yards * typical;
    minutesLeft -= yards * typicalMinutes;
  }
  // A smaller last yard in the time that is left.
  let extra = 0;
  while (extra + 1 < typical && yardMinutes(extra + 1) <= minutesLeft) extra++;
  return colonies + extra;
}

export interface ServiceDayState {
  /** A dispatcher's fixed capacity for the day, overriding the estimate. */
  capacityOverride: number | null;
  closed: boolean;
}

/** Colonies the whole day can take: the dispatcher's figure, or the crews' estimates added up. */
export function dayCapacityColonies(crews: readonly CrewForCapacity[], settings: CapacitySettings, day?: ServiceDayState): number {
  if (day?.closed) return 0;
  if (day?.capacityOverride != null) return day.capacityOverride;
  return crews.reduce((sum, crew) => sum + crewDayCapacityColonies(crew, settings), 0);
}

/** Colonies that still fit on a day (never below 0). */
export function coloniesStillFitting(capacity: number, booked: number): number {
  return Math.max(0, capacity - booked);
}
