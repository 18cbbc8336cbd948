// Times of the demo's runs, worked out with the app's own rules, so a demo stop shows the
// arrival, service and departure the dispatcher's day planner would give it: drive times
// from the straight-line estimate the app uses without a routing engine (app/domain/travel.ts,
// with the settings' circuity and speed), service minutes from the service-time model
// (app/domain/service-time.ts) with the dose's vaporizer loads (app/domain/treatment-plan.ts),
// and stop times from the planner's re-timing of a given order (recomputeTimes).
import type { BoxType } from "../app/domain/box-types.ts";
import type { LatLng } from "../app/domain/geo.ts";
import { recomputeTimes, type TimeWindow } from "../app/domain/planner/index.ts";
import { serviceMinutesForYard } from "../app/domain/service-time.ts";
import type { BusinessSettings } from "../app/domain/settings.ts";
import { travelMatrix } from "../app/domain/travel.ts";
import { colonyDose } from "../app/domain/treatment-plan.ts";
import { windowForPreference, type VisitTimePreference } from "../app/domain/time-windows.ts";

export type DemoTimePreference = VisitTimePreference;

/** A visit's service window: the app's own rule (app/domain/time-windows.ts). */
export const demoWindow = windowForPreference;

type TimingSettings = Pick<
  BusinessSettings,
  | "setupMinutes"
  | "sublimationSeconds"
  | "moveBetweenHivesMinutes"
  | "blockReheatSeconds"
  | "entranceClosedMinutes"
  | "doseGramsPerBroodBox"
  | "doseGramsPerMediumBox"
  | "doseGramsPerNucBox"
  | "vaporizerLoadGrams"
  | "circuityFactor"
  | "averageSpeedKmh"
>;

/** What the service time of a visit depends on. */
export interface DemoStopYard {
  colonies: number;
  broodBoxesPerColony: number;
  boxType: BoxType;
}

/** Minutes a crew with `vaporizers` spends at a visit, as the day planner counts them. */
export function demoServiceMinutes(yard: DemoStopYard, vaporizers: number, settings: TimingSettings): number {
  const dose = colonyDose({ broodBoxesPerColony: yard.broodBoxesPerColony, boxType: yard.boxType }, settings);
  return serviceMinutesForYard({
    colonies: yard.colonies,
    vaporizers,
    loadsPerColony: dose.loadsPerColony,
    setupMinutes: settings.setupMinutes,
    sublimationSeconds: settings.sublimationSeconds,
    moveBetweenHivesMinutes: settings.moveBetweenHivesMinutes,
    blockReheatSeconds: settings.blockReheatSeconds,
    entranceClosedMinutes: settings.entranceClosedMinutes,
  });
}

export interface DemoTimedVisit extends DemoStopYard {
  point: LatLng;
  pref: DemoTimePreference;
  /** When the visit was booked (earlier bookings win the planner's ties). */
  bookedAt: Date;
}

export interface DemoTimedCrew {
  start: LatLng;
  workStartMin: number;
  workEndMin: number;
  vaporizers: number;
  maxColoniesPerDay: number | null;
}

export interface DemoTimedStop {
  /** Seconds after local midnight of the service day. */
  arrive: number;
  start: number;
  leave: number;
  driveSeconds: number;
  driveMeters: number;
}

export interface DemoTimedRun {
  stops: DemoTimedStop[];
  /** Back at the start point, seconds after local midnight. */
  end: number;
  /** Every leg, the drive back included. */
  driveSeconds: number;
  driveMeters: number;
  /** On time for every window and the working day, and within the crew's daily colonies. */
  fits: boolean;
}

/**
 * Times a crew's visits in the given order, leaving from and returning to the crew's start,
 * as the planner re-times a run (service starts at max(arrival, window start)).
 */
export function timeDemoRun(
  crew: DemoTimedCrew,
  visits: readonly DemoTimedVisit[],
  dayCrews: ReadonlyArray<{ workStartMin: number; workEndMin: number }>,
  settings: TimingSettings,
): DemoTimedRun {
  if (visits.length === 0) return { stops: [], end: crew.workStartMin * 60, driveSeconds: 0, driveMeters: 0, fits: true };
  // Point 0 is the crew's start (and end); visit i is point i + 1.
  const matrix = travelMatrix([crew.start, ...visits.map((v) => v.point)], {
    circuityFactor: settings.circuityFactor,
    averageSpeedKmh: settings.averageSpeedKmh,
  });
  const planVisits = visits.map((v, i) => ({
    id: String(i),
    pointIndex: i + 1,
    colonies: v.colonies,
    serviceMinutes: demoServiceMinutes(v, crew.vaporizers, settings),
    window: demoWindow(v.pref, dayCrews),
    bookedAt: v.bookedAt.toISOString(),
  }));
  const run = recomputeTimes(
    { id: "crew", startIndex: 0, endIndex: 0, workStartMin: crew.workStartMin, workEndMin: crew.workEndMin },
    planVisits.map((v) => v.id),
    planVisits,
    matrix,
  );
  const colonies = visits.reduce((sum, v) => sum + v.colonies, 0);
  // The planner's times are exact (whole seconds here: every figure is whole seconds).
  const seconds = (minutes: number) => Math.round(minutes * 60);
  return {
    stops: run.stops.map((s) => ({
      arrive: seconds(s.arriveMin),
      start: seconds(s.startMin),
      leave: seconds(s.leaveMin),
      driveSeconds: s.driveSecondsIn,
      driveMeters: s.driveMetresIn,
    })),
    end: seconds(run.returnMin),
    driveSeconds: run.driveSeconds,
    driveMeters: run.driveMetres,
    fits: run.feasible && (crew.maxColoniesPerDay === null || colonies <= crew.maxColoniesPerDay),
  };
}
