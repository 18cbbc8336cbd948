import { describe, expect, it } from "vitest";
import { colonyDose } from "~/domain/treatment-plan";
import { plannedCourseSpanProblem } from "~/domain/treatment-guards";
import { serviceMinutesForYard } from "~/domain/service-time";
import { validateBusinessSettings } from "~/domain/settings";
import { estimateDriveMetres, estimateDriveSeconds } from "~/domain/travel";
import { minutesAfterZonedMidnight } from "~/domain/zoned-time";
import { buildDemoPlan, checkPlan, DEMO_SETTINGS, DEMO_TIME_ZONE, type DemoPlan } from "../../seeds/demo";

// The demo is made with the app's own rules: the settings it saves are valid settings, and
// every invoice, dose and stop time in it is what the app would have made from its tallies
// and yards with those settings. These tests check the seed itself: its figures are never a
// test's expected values elsewhere. Expected figures here are worked by hand from
// DEMO_SETTINGS, or are invariants, never the seed's own functions run a second time.
const plan = buildDemoPlan("2026-10-15");

const treatedCount = (invoice: DemoPlan["invoices"][number]) => invoice.visit.tallies.filter((t) => t.outcome === "treated").length;

describe("demo data follows the app's rules", () => {
  it("saves settings the settings page would accept", () => {
    const checked = validateBusinessSettings(DEMO_SETTINGS);
    expect(checked.ok).toBe(true);
    expect(plannedCourseSpanProblem(DEMO_SETTINGS.roundsWithBrood, DEMO_SETTINGS.roundIntervalDays)).toBeNull();
    checkPlan(plan);
  });

  it("bills visits of 1 and 3 treated colonies at the hand-worked figures of the demo prices", () => {
    // The prices the arithmetic below is worked with.
    expect(DEMO_SETTINGS.pricePerColonyCents).toBe(900);
    expect(DEMO_SETTINGS.tripFeeCents).toBe(3500);
    expect(DEMO_SETTINGS.minimumPerVisitCents).toBe(0);
    expect(DEMO_SETTINGS.taxRateBasisPoints).toBe(800);
    // 3 treated: 3 × $9.00 = $27.00, + $35.00 trip fee = $62.00 (above the $0 minimum, no
    // top-up); tax 8 % of $62.00 = $4.96; total $66.96.
    // 1 treated: $9.00 + $35.00 = $44.00; tax 8 % = $3.52; total $47.52.
    const handWorked = new Map([
      [3, { lines: [[3, 900, 2700], [1, 3500, 3500]], subtotal: 6200, tax: 496, total: 6696 }],
      [1, { lines: [[1, 900, 900], [1, 3500, 3500]], subtotal: 4400, tax: 352, total: 4752 }],
    ]);
    for (const [treated, expected] of handWorked) {
      const rows = plan.invoices.filter((i) => treatedCount(i) === treated);
      expect(rows.length, `demo invoices for ${treated} treated colonies`).toBeGreaterThan(0);
      for (const invoice of rows) {
        expect(invoice.lines.map((l) => [l.quantity, l.unitCents, l.amountCents])).toEqual(expected.lines);
        expect(invoice.lines.map((l) => l.kind)).toEqual(["colony", "trip_fee"]);
        expect([invoice.subtotal, invoice.tax, invoice.total]).toEqual([expected.subtotal, expected.tax, expected.total]);
      }
    }
  });

  it("makes every invoice add up: lines to the subtotal, tax at the rate rounded half up, subtotal + tax to the total", () => {
    expect(plan.invoices.length).toBeGreaterThan(0);
    const s = DEMO_SETTINGS;
    for (const invoice of plan.invoices) {
      const treated = treatedCount(invoice);
      // Colonies × price + trip fee, topped up to the minimum per visit.
      const charged = treated * s.pricePerColonyCents + s.tripFeeCents;
      expect(invoice.subtotal).toBe(Math.max(charged, s.minimumPerVisitCents));
      expect(invoice.subtotal).toBe(invoice.lines.reduce((sum, l) => sum + l.amountCents, 0));
      for (const line of invoice.lines) expect(line.amountCents).toBe(line.quantity * line.unitCents);
      expect(invoice.tax).toBe(Math.floor((invoice.subtotal * s.taxRateBasisPoints + 5000) / 10000));
      expect(invoice.total).toBe(invoice.subtotal + invoice.tax);
    }
  });

  it("doses every treated colony at brood boxes × the rate of its box type in the settings, and no colony past the season's cap", () => {
    const ratePerBox = {
      deep: DEMO_SETTINGS.doseGramsPerBroodBox,
      medium: DEMO_SETTINGS.doseGramsPerMediumBox,
      nuc: DEMO_SETTINGS.doseGramsPerNucBox,
    };
    const perColonyYear = new Map<string, number>();
    let treated = 0;
    for (const visit of plan.visits) {
      for (const tally of visit.tallies) {
        if (tally.outcome !== "treated") {
          expect(tally.doseGrams).toBe(0);
          continue;
        }
        treated++;
        expect(tally.broodBoxes).toBeGreaterThanOrEqual(1);
        // In centigrams, as doses are kept to 0.01 g.
        expect(Math.round(tally.doseGrams * 100)).toBe(Math.round(tally.broodBoxes * ratePerBox[tally.boxType] * 100));
        const key = `${plan.yards.indexOf(visit.yard)}/${tally.colony.label}/${visit.date.slice(0, 4)}`;
        perColonyYear.set(key, (perColonyYear.get(key) ?? 0) + 1);
      }
    }
    expect(treated).toBeGreaterThan(0);
    expect(Math.max(...perColonyYear.values())).toBeLessThanOrEqual(DEMO_SETTINGS.maxApplicationsPerColonyPerSeason);
  });

  it("spaces a 6-colony stop of a 2-vaporizer crew by the hand-worked service time of the settings", () => {
    // The figures the arithmetic below is worked with (the settings' defaults).
    expect(DEMO_SETTINGS.setupMinutes).toBe(15);
    expect(DEMO_SETTINGS.sublimationSeconds).toBe(35);
    expect(DEMO_SETTINGS.moveBetweenHivesMinutes).toBe(2);
    expect(DEMO_SETTINGS.blockReheatSeconds).toBe(60);
    expect(DEMO_SETTINGS.entranceClosedMinutes).toBe(10);
    expect(DEMO_SETTINGS.vaporizerLoadGrams).toBe(2);
    expect(DEMO_SETTINGS.doseGramsPerBroodBox).toBe(1);
    // 6 colonies of ≤ 2 deep boxes at 1 g a box: ≤ 2 g, one 2 g load each; 2 vaporizers side
    // by side: ceil(6 / 2) = 3 cycles. Set-up 15 min + 3 doses × 35 s (1.75 min) + 2 gaps ×
    // max(2 min move, 60 s reheat) = 4 min + 10 min entrance closed = 30.75 min = 1845 s.
    const stops = plan.runs
      .filter((r) => r.crew.vaporizers === 2)
      .flatMap((r) => r.stops)
      .filter((s) => s.visit.coloniesExpected === 6 && s.visit.yard.boxType === "deep");
    expect(stops.length).toBeGreaterThan(0);
    for (const stop of stops) expect(stop.leaveAt.getTime() - stop.startAt.getTime()).toBe(1845_000);
  });

  it("times every run as the app does: each leg the straight-line drive estimate, each stop the service-time model", () => {
    const estimate = { circuityFactor: DEMO_SETTINGS.circuityFactor, averageSpeedKmh: DEMO_SETTINGS.averageSpeedKmh };
    const localMin = (at: Date, date: string) => minutesAfterZonedMidnight(at, date, DEMO_TIME_ZONE);
    expect(plan.runs.length).toBeGreaterThan(0);
    for (const run of plan.runs) {
      const crew = run.crew;
      expect(run.stops.length).toBeGreaterThan(0);
      let from = crew.start;
      let previousLeave: Date | null = null;
      let driveSeconds = 0;
      let driveMetres = 0;
      for (const [position, stop] of run.stops.entries()) {
        const { yard, pref, coloniesExpected } = stop.visit;
        expect(stop.position).toBe(position);
        // The leg: the app's estimate from the previous point, and nothing else between them.
        expect(stop.driveSeconds).toBe(estimateDriveSeconds(from, yard.point, estimate));
        expect(stop.driveMeters).toBe(estimateDriveMetres(from, yard.point, estimate));
        const windowStart = pref === "afternoon" ? 12 * 60 : crew.workStartMin;
        const departed = stop.arriveAt.getTime() - stop.driveSeconds * 1000;
        if (previousLeave) expect(departed).toBe(previousLeave.getTime());
        // The crew leaves at the start of work, later only so as not to wait at its first stop.
        else expect(localMin(new Date(departed), run.date)).toBeCloseTo(Math.max(crew.workStartMin, windowStart - stop.driveSeconds / 60), 9);
        // Service starts on arrival, or when the window opens.
        expect(localMin(stop.startAt, run.date)).toBeCloseTo(Math.max(localMin(stop.arriveAt, run.date), windowStart), 9);
        const loads = colonyDose({ broodBoxesPerColony: yard.boxes, boxType: yard.boxType }, DEMO_SETTINGS).loadsPerColony;
        const serviceMinutes = serviceMinutesForYard({
          colonies: coloniesExpected,
          vaporizers: crew.vaporizers,
          loadsPerColony: loads,
          setupMinutes: DEMO_SETTINGS.setupMinutes,
          sublimationSeconds: DEMO_SETTINGS.sublimationSeconds,
          moveBetweenHivesMinutes: DEMO_SETTINGS.moveBetweenHivesMinutes,
          blockReheatSeconds: DEMO_SETTINGS.blockReheatSeconds,
          entranceClosedMinutes: DEMO_SETTINGS.entranceClosedMinutes,
        });
        expect(stop.leaveAt.getTime() - stop.startAt.getTime()).toBe(Math.round(serviceMinutes * 60_000));
        // Morning visits end by noon, afternoon ones start after it, all within the working day.
        if (pref === "morning") expect(localMin(stop.leaveAt, run.date)).toBeLessThanOrEqual(12 * 60);
        expect(localMin(stop.leaveAt, run.date)).toBeLessThanOrEqual(crew.workEndMin);
        driveSeconds += stop.driveSeconds;
        driveMetres += stop.driveMeters;
        from = yard.point;
        previousLeave = stop.leaveAt;
      }
      // The run's drive: every leg and the drive back to the start.
      expect(run.driveSeconds).toBe(driveSeconds + estimateDriveSeconds(from, crew.start, estimate));
      expect(run.driveMeters).toBe(driveMetres + estimateDriveMetres(from, crew.start, estimate));
      const back = localMin(previousLeave!, run.date) + estimateDriveSeconds(from, crew.start, estimate) / 60;
      expect(back).toBeLessThanOrEqual(crew.workEndMin);
    }
  });

  it("drives each leg at the settings' circuity and speed over the great-circle distance (worked independently)", () => {
    // Great-circle distance on a sphere of the mean Earth radius 6371.0088 km (IUGG), by the
    // plain haversine formula; road metres = that × circuity (1.2), rounded; seconds = metres
    // at 60 km/h (16.67 m/s), rounded. Allowed 1 unit for the rounding of a different formula.
    // Source: haversine formula, R. W. Sinnott, "Virtues of the Haversine", Sky and Telescope 68 (2), 1984.
    const rad = Math.PI / 180;
    const greatCircleMetres = (a: { lat: number; lng: number }, b: { lat: number; lng: number }) => {
      const h = Math.sin(((b.lat - a.lat) * rad) / 2) ** 2 + Math.cos(a.lat * rad) * Math.cos(b.lat * rad) * Math.sin(((b.lng - a.lng) * rad) / 2) ** 2;
      return 2 * 6_371_008.8 * Math.asin(Math.sqrt(h));
    };
    let legs = 0;
    for (const run of plan.runs) {
      let from = run.crew.start;
      for (const stop of run.stops) {
        const metres = Math.round(greatCircleMetres(from, stop.visit.yard.point) * DEMO_SETTINGS.circuityFactor);
        expect(Math.abs(stop.driveMeters - metres)).toBeLessThanOrEqual(1);
        expect(Math.abs(stop.driveSeconds - Math.round((metres * 3.6) / DEMO_SETTINGS.averageSpeedKmh))).toBeLessThanOrEqual(1);
        from = stop.visit.yard.point;
        legs++;
      }
    }
    expect(legs).toBeGreaterThan(0);
  });
});
