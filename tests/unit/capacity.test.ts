import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { coloniesStillFitting, crewDayCapacityColonies, dayCapacityColonies } from "~/domain/capacity";
import { serviceMinutesForYard } from "~/domain/service-time";
import { defaultBusinessSettings } from "~/domain/settings";

const settings = defaultBusinessSettings;

describe("day capacity", () => {
  it("fills a crew's day with typical yards, each costing its service time and a drive", () => {
    const crew = { workMinutes: 9 * 60, vaporizers: 2 };
    const capacity = crewDayCapacityColonies(crew, settings);
    const typical = settings.typicalColoniesPerYard;
    const yardMinutes = serviceMinutesForYard({ ...settings, colonies: typical, vaporizers: 2 }) + settings.averageDriveMinutesBetweenYards;
    const fullYards = Math.floor((crew.workMinutes - settings.averageDriveMinutesBetweenYards) / yardMinutes);
    expect(capacity).toBeGreaterThanOrEqual(fullYards * typical);
    expect(capacity).toBeLessThan((fullYards + 1) * typical);
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
    const sum = crewDayCapacityColonies(crews[0], settings) + crewDayCapacityColonies(crews[1], settings);
    expect(dayCapacityColonies(crews, settings)).toBe(sum);
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
