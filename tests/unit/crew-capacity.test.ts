import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  crewColonyLimit,
  crewDayCapacityColonies,
  crewWorksOn,
  dayCapacityColonies,
  isoWeekdayOf,
  visitsBeyondCapacity,
  weekdaysLabel,
} from "~/domain/capacity";
import { defaultBusinessSettings } from "~/domain/settings";

const settings = defaultBusinessSettings; // 1 g per brood box
const longDay = { workMinutes: 10 * 60, vaporizers: 3 };

describe("weekdays", () => {
  it("numbers ISO weekdays from Monday = 1 to Sunday = 7, whatever the year", () => {
    // Source: any printed calendar — 2026-11-09 is a Monday, 2026-11-15 a Sunday,
    // 2024-02-29 a Thursday, 2000-01-01 a Saturday.
    expect(isoWeekdayOf("2026-11-09")).toBe(1);
    expect(isoWeekdayOf("2026-11-15")).toBe(7);
    expect(isoWeekdayOf("2024-02-29")).toBe(4);
    expect(isoWeekdayOf("2000-01-01")).toBe(6);
    expect(() => isoWeekdayOf("09/11/2026")).toThrow(RangeError);
  });

  it("writes a crew's weekdays short", () => {
    expect(weekdaysLabel([1, 2, 3, 4, 5])).toBe("Mon–Fri");
    expect(weekdaysLabel([6, 1, 2, 3, 4, 5])).toBe("Mon–Sat");
    expect(weekdaysLabel([1, 3, 5])).toBe("Mon, Wed, Fri");
    expect(weekdaysLabel([1, 2, 3, 4, 5, 6, 7])).toBe("Every day");
    expect(weekdaysLabel([])).toBe("No day");
  });

  it("counts a crew on a date only when active, on one of its weekdays, and neither its day nor the whole day is closed", () => {
    const crew = { active: true, workingWeekdays: [1, 2, 3, 4, 5] };
    const open = { dayClosed: false, crewDayClosed: false };
    expect(crewWorksOn(crew, "2026-11-10", open)).toBe(true); // Tuesday
    expect(crewWorksOn(crew, "2026-11-14", open)).toBe(false); // Saturday
    expect(crewWorksOn({ ...crew, active: false }, "2026-11-10", open)).toBe(false);
    expect(crewWorksOn(crew, "2026-11-10", { dayClosed: true, crewDayClosed: false })).toBe(false);
    expect(crewWorksOn(crew, "2026-11-10", { dayClosed: false, crewDayClosed: true })).toBe(false);
  });
});

describe("a crew's daily limits in the capacity", () => {
  it("turns a gram limit into colonies at one brood box per colony, in centigrams", () => {
    expect(crewColonyLimit({}, 1)).toBe(Infinity);
    expect(crewColonyLimit({ maxColoniesPerDay: 25 }, 1)).toBe(25);
    expect(crewColonyLimit({ maxDoseGramsPerDay: 30 }, 1)).toBe(30);
    expect(crewColonyLimit({ maxDoseGramsPerDay: 30 }, 1.5)).toBe(20);
    // 0.3 g at 0.1 g per box is exactly 3 colonies, not 2.999….
    expect(crewColonyLimit({ maxDoseGramsPerDay: 0.3 }, 0.1)).toBe(3);
    expect(crewColonyLimit({ maxColoniesPerDay: 25, maxDoseGramsPerDay: 20 }, 1)).toBe(20);
  });

  it("caps the crew's estimate at its limits, and only there", () => {
    // Default times, 3 vaporizers: a typical yard of 5 colonies is 2 cycles,
    // 15 + 2 × 35/60 + 1 × 2 + 10 = 28.17 min, + 20 min drive = 48.17 min. The 600 min day less
    // the 20 min drive home leaves 580: 580 / 48.17 = 12.04 → 12 yards = 60 colonies, 2 min
    // left (a 1-colony yard needs 15 + 35/60 + 10 + 20 = 45.58) → 60.
    expect(crewDayCapacityColonies(longDay, settings)).toBe(60);
    expect(crewDayCapacityColonies({ ...longDay, maxColoniesPerDay: 12 }, settings)).toBe(12);
    // The colony figure is an upper bound: 9.5 g over the least dose a colony can take (one
    // nuc box at the default 0.5 g) is 19; the grams themselves are checked separately.
    expect(crewDayCapacityColonies({ ...longDay, maxDoseGramsPerDay: 9.5 }, settings)).toBe(19);
    // A limit above the estimate (60 + 50 = 110) leaves the estimate, 60.
    expect(crewDayCapacityColonies({ ...longDay, maxColoniesPerDay: 110 }, settings)).toBe(60);
    fc.assert(
      fc.property(fc.integer({ min: 60, max: 720 }), fc.integer({ min: 1, max: 4 }), fc.integer({ min: 1, max: 200 }), (minutes, vaporizers, limit) => {
        const crew = { workMinutes: minutes, vaporizers };
        const capped = crewDayCapacityColonies({ ...crew, maxColoniesPerDay: limit }, settings);
        expect(capped).toBe(Math.min(limit, crewDayCapacityColonies(crew, settings)));
      }),
    );
  });

  it("never lets a dispatcher's figure exceed what the working crews' limits allow together", () => {
    const crews = [
      { ...longDay, maxColoniesPerDay: 10 },
      { ...longDay, maxColoniesPerDay: 15 },
    ];
    expect(dayCapacityColonies(crews, settings)).toBe(25);
    expect(dayCapacityColonies(crews, settings, { closed: false, capacityOverride: 40 })).toBe(25);
    expect(dayCapacityColonies(crews, settings, { closed: false, capacityOverride: 18 })).toBe(18);
    // A crew without a limit lifts the cap.
    expect(dayCapacityColonies([...crews, longDay], settings, { closed: false, capacityOverride: 40 })).toBe(40);
    // A figure set for a day no crew works stands as set.
    expect(dayCapacityColonies([], settings, { closed: false, capacityOverride: 12 })).toBe(12);
  });
});

describe("visits beyond a day's new capacity", () => {
  it("keeps visits that cannot move, then the earliest booked while they fit", () => {
    const visits = [
      { id: 1, colonies: 6, movable: true },
      { id: 2, colonies: 8, movable: true },
      { id: 3, colonies: 3, movable: true },
      { id: 4, colonies: 5, movable: false },
    ];
    // 5 fixed; +6 = 11; 8 would make 19 > 14; 3 makes 14.
    expect(visitsBeyondCapacity(14, visits)).toEqual({ stay: [4, 1, 3], move: [2] });
    expect(visitsBeyondCapacity(0, visits)).toEqual({ stay: [4], move: [1, 2, 3] });
    expect(visitsBeyondCapacity(100, visits).move).toEqual([]);
  });

  it("never leaves more movable colonies than fit, and moves nothing that fits", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 60 }),
        fc.array(fc.record({ colonies: fc.integer({ min: 1, max: 24 }), movable: fc.boolean() }), { maxLength: 12 }),
        (capacity, raw) => {
          const visits = raw.map((v, i) => ({ id: i + 1, ...v }));
          const { stay, move } = visitsBeyondCapacity(capacity, visits);
          expect([...stay, ...move].sort((a, b) => a - b)).toEqual(visits.map((v) => v.id));
          const fixed = visits.filter((v) => !v.movable).reduce((s, v) => s + v.colonies, 0);
          const kept = visits.filter((v) => stay.includes(v.id)).reduce((s, v) => s + v.colonies, 0);
          expect(kept).toBeLessThanOrEqual(Math.max(capacity, fixed));
          for (const id of move) {
            const v = visits.find((x) => x.id === id)!;
            expect(v.movable).toBe(true);
            expect(kept + v.colonies).toBeGreaterThan(capacity);
          }
        },
      ),
    );
  });
});
