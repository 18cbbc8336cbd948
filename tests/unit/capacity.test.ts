import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { coloniesStillFitting, crewDayCapacityColonies, dayCapacityColonies } from "~/domain/capacity";
import { defaultBusinessSettings } from "~/domain/settings";

const settings = defaultBusinessSettings;

describe("day capacity", () => {
  it("fills a crew's day with typical yards, each costing its service time and a drive", () => {
    // Default settings: typical yard 5 colonies, 35 s a dose, gap max(2 min move, 60 s reheat)
    // = 2 min, 15 min set-up, 10 min entrance, 20 min average drive. With 2 vaporizers a typical
    // yard is 3 cycles: 15 + 3 × 35/60 + 2 × 2 + 10 = 30.75 min, + 20 drive = 50.75 min.
    // 540 − 20 (drive home) = 520: 520 / 50.75 = 10.25 → 10 yards = 50 colonies, 12.5 min left;
    // a 1-colony yard needs 15 + 35/60 + 10 + 20 = 45.58 min, so none more → 50.
    expect(crewDayCapacityColonies({ workMinutes: 9 * 60, vaporizers: 2 }, settings)).toBe(50);
    // 525 − 20 = 505: 9 yards = 45 colonies in 456.75 min, 48.25 left. A smaller last yard of
    // 4 colonies (2 cycles: 15 + 2 × 35/60 + 2 + 10 + 20 = 48.17 min) fits → 49.
    expect(crewDayCapacityColonies({ workMinutes: 525, vaporizers: 2 }, settings)).toBe(49);
    // One vaporizer: a typical yard is 5 cycles, 15 + 5 × 35/60 + 4 × 2 + 10 + 20 = 55.92 min;
    // 520 / 55.92 = 9.30 → 9 yards = 45 colonies, 16.75 min left (< 45.58) → 45.
    expect(crewDayCapacityColonies({ workMinutes: 9 * 60, vaporizers: 1 }, settings)).toBe(45);
  });

  it("is zero for a crew with no working time and grows with hours and vaporizers", () => {
    expect(crewDayCapacityColonies({ workMinutes: 0, vaporizers: 2 }, settings)).toBe(0);
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 720 }), fc.integer({ min: 0, max: 120 }), fc.integer({ min: 1, max: 4 }), (minutes, more, vaporizers) => {
        const base = crewDayCapacityColonies({ workMinutes: minutes, vaporizers }, settings);
        expect(crewDayCapacityColonies({ workMinutes: minutes + more, vaporizers }, settings)).toBeGreaterThanOrEqual(base);
        expect(crewDayCapacityColonies({ workMinutes: minutes, vaporizers: vaporizers + 1 }, settings)).toBeGreaterThanOrEqual(base);
      }),
    );
  });

  it("adds the crews up, unless the dispatcher closed the day or fixed its capacity", () => {
    const crews = [
      { workMinutes: 540, vaporizers: 2 },
      { workMinutes: 540, vaporizers: 1 },
    ];
    // 50 (2 vaporizers) + 45 (1 vaporizer), worked out in the first test = 95.
    expect(dayCapacityColonies(crews, settings)).toBe(95);
    expect(dayCapacityColonies(crews, settings, { closed: true, capacityOverride: 40 })).toBe(0);
    expect(dayCapacityColonies(crews, settings, { closed: false, capacityOverride: 25 })).toBe(25);
    expect(dayCapacityColonies([], settings)).toBe(0);
  });

  it("never reports negative room", () => {
    expect(coloniesStillFitting(25, 30)).toBe(0);
    expect(coloniesStillFitting(25, 25)).toBe(0);
    expect(coloniesStillFitting(25, 7)).toBe(18);
  });
});
