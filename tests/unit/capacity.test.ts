import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { coloniesStillFitting, crewDayCapacityColonies, dayCapacityColonies, typicalLoadsPerColony } from "~/domain/capacity";
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

  it("takes fewer colonies when a typical colony's dose takes two vaporizer loads", () => {
    // Each load is a dose slot of its own (service-time.ts). A typical yard of 5 colonies × 2
    // loads on 2 vaporizers is 5 cycles: 15 + 5 × 35/60 + 4 × 2 + 10 = 35.92 min, + 20 drive
    // = 55.92 min. 520 / 55.92 = 9.30 → 9 yards = 45 colonies, 16.75 min left; a 1-colony
    // yard (2 loads, 1 cycle) needs 15 + 35/60 + 10 + 20 = 45.58 min, so none more → 45.
    expect(crewDayCapacityColonies({ workMinutes: 9 * 60, vaporizers: 2 }, { ...settings, loadsPerTypicalColony: 2 })).toBe(45);
    // One load each is the 50 worked out above; an explicit 1 changes nothing.
    expect(crewDayCapacityColonies({ workMinutes: 9 * 60, vaporizers: 2 }, { ...settings, loadsPerTypicalColony: 1 })).toBe(50);
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 720 }), fc.integer({ min: 1, max: 4 }), fc.integer({ min: 1, max: 3 }), (minutes, vaporizers, loads) => {
        const fewer = crewDayCapacityColonies({ workMinutes: minutes, vaporizers }, { ...settings, loadsPerTypicalColony: loads });
        const more = crewDayCapacityColonies({ workMinutes: minutes, vaporizers }, { ...settings, loadsPerTypicalColony: loads + 1 });
        expect(more).toBeLessThanOrEqual(fewer);
      }),
    );
  });

  it("takes a typical colony's loads as the median over the colonies on the books", () => {
    expect(typicalLoadsPerColony([])).toBe(1);
    expect(typicalLoadsPerColony([{ colonies: 0, loadsPerColony: 3 }])).toBe(1);
    // 12 colonies of 1 load, 5 of 2: the middle colony (the 9th of 17) takes 1 load.
    expect(
      typicalLoadsPerColony([
        { colonies: 5, loadsPerColony: 2 },
        { colonies: 12, loadsPerColony: 1 },
      ]),
    ).toBe(1);
    // A big yard of 2-load colonies outweighs several small 1-load yards: 3 + 4 + 2 = 9 of 1, 20 of 2.
    expect(
      typicalLoadsPerColony([
        { colonies: 3, loadsPerColony: 1 },
        { colonies: 4, loadsPerColony: 1 },
        { colonies: 20, loadsPerColony: 2 },
        { colonies: 2, loadsPerColony: 1 },
      ]),
    ).toBe(2);
    // An even split takes the higher: the estimate errs towards the time a crew really needs.
    expect(
      typicalLoadsPerColony([
        { colonies: 6, loadsPerColony: 1 },
        { colonies: 6, loadsPerColony: 3 },
      ]),
    ).toBe(3);
    expect(() => typicalLoadsPerColony([{ colonies: 2, loadsPerColony: 0 }])).toThrow(RangeError);
    expect(() => typicalLoadsPerColony([{ colonies: 1.5, loadsPerColony: 1 }])).toThrow(RangeError);
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
