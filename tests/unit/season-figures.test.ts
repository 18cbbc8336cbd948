import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import {
  areaOfYard,
  compassSectorOf,
  daysPastDue,
  drivePerColony,
  gramsFromCentigrams,
  isoWeekOf,
  middleOf,
  miteLoadByArea,
  periodPresets,
  pooledMitesPer100,
  presetOf,
  ratioOrNull,
  readDashboardPeriod,
  receivableBucketFor,
  receivablesByAge,
  sumByWeek,
  townFromAddress,
  visitsPerCrewDay,
  weeksOfPeriod,
} from "~/domain/season-figures";

describe("isoWeekOf", () => {
  // Source: ISO 8601 week dates; the examples are those listed in the Wikipedia article
  // "ISO week date" (e.g. 2008-12-29 is 2009-W01-1, 2010-01-03 is 2009-W53-7).
  it.each([
    ["2008-12-28", "2008-W52", "2008-12-22"],
    ["2008-12-29", "2009-W01", "2008-12-29"],
    ["2010-01-03", "2009-W53", "2009-12-28"],
    ["2010-01-04", "2010-W01", "2010-01-04"],
    ["2005-01-01", "2004-W53", "2004-12-27"],
    ["2007-01-01", "2007-W01", "2007-01-01"],
    ["2020-12-31", "2020-W53", "2020-12-28"],
    ["2021-01-03", "2020-W53", "2020-12-28"],
  ])("%s is in %s (Monday %s)", (date, key, monday) => {
    const week = isoWeekOf(date);
    expect(week.key).toBe(key);
    expect(week.monday).toBe(monday);
    expect(week.sunday).toBe(addCalendarDays(monday, 6));
  });

  // An independent count: week 1 starts on the Monday on or before 4 January.
  function week1Monday(year: number): number {
    const jan4 = Date.UTC(year, 0, 4);
    return jan4 - ((new Date(jan4).getUTCDay() + 6) % 7) * 86_400_000;
  }

  it("agrees with counting weeks from the Monday on or before 4 January, for any date", () => {
    fc.assert(
      fc.property(fc.integer({ min: Date.UTC(1990, 0, 1) / 86_400_000, max: Date.UTC(2080, 11, 31) / 86_400_000 }), (day) => {
        const ms = day * 86_400_000;
        const date = new Date(ms).toISOString().slice(0, 10);
        let year = new Date(ms).getUTCFullYear() + 1;
        while (ms < week1Monday(year)) year--;
        const week = 1 + Math.floor((ms - week1Monday(year)) / (7 * 86_400_000));
        const got = isoWeekOf(date);
        expect([got.isoYear, got.week]).toEqual([year, week]);
        expect(new Date(`${got.monday}T00:00:00Z`).getUTCDay()).toBe(1);
        expect(got.monday <= date && date <= got.sunday).toBe(true);
      }),
      { numRuns: 500 },
    );
  });

  it("refuses text that is not a date", () => {
    expect(() => isoWeekOf("2026-02-30")).toThrow(RangeError);
  });
});

describe("weeksOfPeriod", () => {
  it("cuts the first and last week at the period's ends and marks them part weeks", () => {
    // 2026-10-01 is a Thursday, 2026-10-20 a Tuesday.
    const weeks = weeksOfPeriod({ from: "2026-10-01", to: "2026-10-20" });
    expect(weeks.map((w) => [w.key, w.from, w.to, w.partial])).toEqual([
      ["2026-W40", "2026-10-01", "2026-10-04", true],
      ["2026-W41", "2026-10-05", "2026-10-11", false],
      ["2026-W42", "2026-10-12", "2026-10-18", false],
      ["2026-W43", "2026-10-19", "2026-10-20", true],
    ]);
  });

  it("runs over a year's end with the ISO years", () => {
    const weeks = weeksOfPeriod({ from: "2026-12-24", to: "2027-01-12" });
    expect(weeks.map((w) => w.key)).toEqual(["2026-W52", "2026-W53", "2027-W01", "2027-W02"]);
  });

  it("gives one week for a single day", () => {
    expect(weeksOfPeriod({ from: "2026-11-11", to: "2026-11-11" }).map((w) => [w.key, w.from, w.to, w.partial])).toEqual([
      ["2026-W46", "2026-11-11", "2026-11-11", true],
    ]);
  });

  it("covers every day of the period exactly once", () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 3000 }), fc.integer({ min: 0, max: 400 }), (start, length) => {
        const from = addCalendarDays("2020-01-01", start);
        const to = addCalendarDays(from, length);
        const weeks = weeksOfPeriod({ from, to });
        let days = 0;
        for (const w of weeks) days += Math.round((Date.parse(w.to) - Date.parse(w.from)) / 86_400_000) + 1;
        expect(days).toBe(length + 1);
        expect(weeks[0].from).toBe(from);
        expect(weeks[weeks.length - 1].to).toBe(to);
      }),
    );
  });

  it("refuses a period that ends before it starts", () => {
    expect(() => weeksOfPeriod({ from: "2026-10-02", to: "2026-10-01" })).toThrow(RangeError);
  });
});

describe("sumByWeek", () => {
  it("adds rows up per week, keeps empty weeks at 0 and leaves out rows outside the period", () => {
    const weeks = sumByWeek(
      { from: "2026-10-07", to: "2026-10-27" },
      [
        { date: "2026-10-06", colonies: 100, grams: 100 }, // before the period, same ISO week as the 7th
        { date: "2026-10-07", colonies: 3, grams: 4.5 },
        { date: "2026-10-11", colonies: 2, grams: 2 },
        { date: "2026-10-26", colonies: 7, grams: 8 },
        { date: "2026-10-28", colonies: 100, grams: 100 }, // after the period
      ],
      ["colonies", "grams"] as const,
    );
    expect(weeks.map((w) => [w.week.key, w.colonies, w.grams])).toEqual([
      ["2026-W41", 5, 6.5],
      ["2026-W42", 0, 0],
      ["2026-W43", 0, 0],
      ["2026-W44", 7, 8],
    ]);
  });
});

describe("period presets and the period filter", () => {
  it("offers the season so far, this month so far and the whole of last month", () => {
    expect(periodPresets("2026-03-15").map((p) => [p.key, p.from, p.to])).toEqual([
      ["season", "2026-01-01", "2026-03-15"],
      ["this-month", "2026-03-01", "2026-03-15"],
      ["last-month", "2026-02-01", "2026-02-28"],
    ]);
  });

  it("ends last month on 29 February in a leap year and reaches into last year in January", () => {
    expect(periodPresets("2028-03-02")[2]).toMatchObject({ from: "2028-02-01", to: "2028-02-29" });
    expect(periodPresets("2027-01-20")[2]).toMatchObject({ from: "2026-12-01", to: "2026-12-31" });
  });

  it("knows which quick choice a period is", () => {
    expect(presetOf({ from: "2026-02-01", to: "2026-02-28" }, "2026-03-15")).toBe("last-month");
    expect(presetOf({ from: "2026-02-01", to: "2026-02-27" }, "2026-03-15")).toBeNull();
  });

  it("defaults to the season so far", () => {
    expect(readDashboardPeriod({}, "2026-11-20")).toEqual({ ok: true, period: { from: "2026-01-01", to: "2026-11-20" }, input: { from: "", to: "" } });
    expect(readDashboardPeriod({ from: "  ", to: "" }, "2026-11-20")).toMatchObject({ ok: true, period: { from: "2026-01-01", to: "2026-11-20" } });
  });

  it("starts a period given only its last day on 1 January of that day's year", () => {
    expect(readDashboardPeriod({ to: "2025-06-30" }, "2026-11-20")).toMatchObject({ ok: true, period: { from: "2025-01-01", to: "2025-06-30" } });
  });

  it("puts each problem at its field and keeps what was typed", () => {
    const notADate = readDashboardPeriod({ from: "2026-02-30", to: "2026-03-01" }, "2026-11-20");
    expect(notADate).toEqual({ ok: false, fieldErrors: { from: "Enter the first day as a date, for example 2026-11-20." }, input: { from: "2026-02-30", to: "2026-03-01" } });

    expect(readDashboardPeriod({ from: "2026-05-01", to: "yesterday" }, "2026-11-20")).toMatchObject({
      ok: false,
      fieldErrors: { to: "Enter the last day as a date, for example 2026-11-20." },
    });
    expect(readDashboardPeriod({ from: "2026-05-02", to: "2026-05-01" }, "2026-11-20")).toMatchObject({
      ok: false,
      fieldErrors: { to: "The last day must be on or after the first day." },
    });
    expect(readDashboardPeriod({ from: "2026-05-02", to: "2026-11-21" }, "2026-11-20")).toMatchObject({
      ok: false,
      fieldErrors: { to: "The last day cannot be after today (2026-11-20)." },
    });
    expect(readDashboardPeriod({ from: "2026-11-21" }, "2026-11-20")).toMatchObject({
      ok: false,
      fieldErrors: { from: "The first day cannot be after today (2026-11-20)." },
    });
    expect(readDashboardPeriod({ from: "1999-12-31", to: "2000-03-01" }, "2026-11-20")).toMatchObject({
      ok: false,
      fieldErrors: { from: "Choose a first day on or after 2000-01-01." },
    });
  });

  it("takes two years and a day (731 days) at most", () => {
    expect(readDashboardPeriod({ from: "2024-11-20", to: "2026-11-20" }, "2026-11-20")).toMatchObject({ ok: true });
    expect(readDashboardPeriod({ from: "2024-11-19", to: "2026-11-20" }, "2026-11-20")).toMatchObject({
      ok: false,
      fieldErrors: { from: "Choose a period of at most two years." },
    });
  });
});

describe("receivables by age", () => {
  it("puts the due date itself in 'not yet due' and each boundary day in its bucket", () => {
    expect([-30, 0, 1, 30, 31, 60, 61, 90, 91, 400].map(receivableBucketFor)).toEqual([
      "not_due",
      "not_due",
      "1_30",
      "1_30",
      "31_60",
      "31_60",
      "61_90",
      "61_90",
      "over_90",
      "over_90",
    ]);
  });

  it("counts days past due in calendar days, across a month end", () => {
    expect(daysPastDue("2026-10-31", "2026-11-30")).toBe(30);
    expect(daysPastDue("2026-12-01", "2026-11-30")).toBe(-1);
  });

  it("adds balances per bucket and leaves out what is no longer owed", () => {
    const aged = receivablesByAge("2026-12-31", [
      { dueOn: "2027-01-10", balanceCents: 1000 },
      { dueOn: "2026-12-31", balanceCents: 250 },
      { dueOn: "2026-12-30", balanceCents: 333 },
      { dueOn: "2026-10-02", balanceCents: 4000 }, // 90 days
      { dueOn: "2026-10-01", balanceCents: 5000 }, // 91 days
      { dueOn: "2026-06-01", balanceCents: 0 },
      { dueOn: "2026-06-01", balanceCents: -500 },
    ]);
    expect(aged.buckets.map((b) => [b.key, b.invoices, b.cents])).toEqual([
      ["not_due", 2, 1250],
      ["1_30", 1, 333],
      ["31_60", 0, 0],
      ["61_90", 1, 4000],
      ["over_90", 1, 5000],
    ]);
    expect(aged.totalInvoices).toBe(5);
    expect(aged.totalCents).toBe(10583);
  });

  it("refuses fractions of a cent", () => {
    expect(() => receivablesByAge("2026-12-31", [{ dueOn: "2026-12-01", balanceCents: 10.5 }])).toThrow(RangeError);
  });
});

describe("visits per crew-day", () => {
  it("averages each crew's finished visits over the days it finished any, and all crews together", () => {
    const figures = visitsPerCrewDay([
      { crewId: 2, crewName: "South crew", serviceDate: "2026-10-12", visits: 5 },
      { crewId: 2, crewName: "South crew", serviceDate: "2026-10-13", visits: 2 },
      { crewId: 1, crewName: "North crew", serviceDate: "2026-10-12", visits: 3 },
      { crewId: 1, crewName: "North crew", serviceDate: "2026-10-12", visits: 1 }, // same day again: one crew-day
      { crewId: 1, crewName: "North crew", serviceDate: "2026-10-14", visits: 0 }, // nothing finished: not a crew-day
    ]);
    expect(figures.crews).toEqual([
      { crewId: 1, crewName: "North crew", crewDays: 1, visits: 4, average: 4 },
      { crewId: 2, crewName: "South crew", crewDays: 2, visits: 7, average: 3.5 },
    ]);
    expect(figures).toMatchObject({ crewDays: 3, visits: 11 });
    // All visits over all crew-days (11 / 3), not the mean of the crews' averages (3.75).
    expect(figures.average).toBeCloseTo(11 / 3, 12);
  });

  it("has no average without crew-days", () => {
    expect(visitsPerCrewDay([])).toEqual({ crews: [], crewDays: 0, visits: 0, average: null });
    expect(ratioOrNull(5, 0)).toBeNull();
  });
});

describe("drive minutes per colony", () => {
  it("divides each week's planned drive by its colonies, and the period's totals likewise", () => {
    const drive = drivePerColony({ from: "2026-10-05", to: "2026-10-25" }, [
      { serviceDate: "2026-10-05", driveSeconds: 3600, colonies: 10 },
      { serviceDate: "2026-10-07", driveSeconds: 1800, colonies: 20 },
      { serviceDate: "2026-10-20", driveSeconds: 1200, colonies: 0 },
    ]);
    expect(drive.weeks.map((w) => [w.week.key, w.runs, w.driveMinutes, w.colonies, w.minutesPerColony])).toEqual([
      ["2026-W41", 2, 90, 30, 3],
      ["2026-W42", 0, 0, 0, null],
      ["2026-W43", 1, 20, 0, null],
    ]);
    expect(drive).toMatchObject({ runs: 3, driveMinutes: 110, colonies: 30 });
    expect(drive.minutesPerColony).toBeCloseTo(110 / 30, 12);
  });
});

describe("grams", () => {
  it("turns whole centigrams into grams without floating-point drift", () => {
    expect(gramsFromCentigrams(10 + 20)).toBe(0.3);
    expect(gramsFromCentigrams(42_950)).toBe(429.5);
  });
});

describe("areas", () => {
  it.each([
    ["1845 Foxglove Hill Rd, Ithaca, NY 14850", "Ithaca"],
    ["Lane off Millrace Rd, Watkins Glen, NY 14891", "Watkins Glen"],
    ["12 Orchard Road, Dryden", "Dryden"],
    ["12 Orchard Road,  Dryden ,  NY", "Dryden"],
    ["5 Mill Pond Rd, Groton, NY 13073-1234, USA", "Groton"],
    ["5 Mill Pond Rd, Groton, 13073", "Groton"],
  ])("reads the town of %j", (address, town) => {
    expect(townFromAddress(address)).toBe(town);
  });

  it.each([null, "", "Ithaca", "12 Orchard Road", "12 Orchard Road, NY 14850", "Farm gate, Route 13"])("finds no town in %j", (address) => {
    expect(townFromAddress(address)).toBeNull();
  });

  it("names the compass sector of a bearing, each sector centred on its direction", () => {
    expect([0, 22.49, 22.5, 67.49, 90, 135, 180, 225, 270, 315, 337.5, 359.9, -45, 405].map(compassSectorOf)).toEqual([
      "North",
      "North",
      "North-east",
      "North-east",
      "East",
      "South-east",
      "South",
      "South-west",
      "West",
      "North-west",
      "North",
      "North",
      "North-west",
      "North-east",
    ]);
  });

  it("uses the town when the address names one, otherwise the direction from the base", () => {
    const base = { lat: 42.4, lng: -76.5 };
    expect(areaOfYard({ address: "3 Elm St, Candor, NY 13743", lat: 42.0, lng: -76.0 }, base)).toEqual({ key: "town:candor", name: "Candor", kind: "town" });
    expect(areaOfYard({ address: null, lat: 42.6, lng: -76.5 }, base)).toEqual({ key: "sector:North", name: "North of base", kind: "sector" });
    expect(areaOfYard({ address: "Behind the barn", lat: 42.3, lng: -76.6 }, base)).toMatchObject({ name: "South-west of base" });
    expect(areaOfYard({ address: null, lat: 42.6, lng: -76.5 }, null)).toEqual({ key: "unknown", name: "Town not known", kind: "unknown" });
  });

  it("takes the middle of the crews' start points as the base", () => {
    expect(middleOf([{ lat: 42.0, lng: -76.0 }, { lat: 43.0, lng: -77.0 }])).toEqual({ lat: 42.5, lng: -76.5 });
    expect(middleOf([])).toBeNull();
  });
});

describe("mite load by area", () => {
  it("pools all mites over all bees, which differs from averaging the washes' rates", () => {
    // 3 in 100 (3 per 100) and 30 in 300 (10 per 100): pooled 33 in 400 = 8.25, the mean of the rates 6.5.
    expect(pooledMitesPer100(3 + 30, 100 + 300)).toBe(8.25);
    expect(pooledMitesPer100(0, 0)).toBeNull();
  });

  it("groups yards by area, before and after apart, and gives the change", () => {
    const base = { lat: 42.4, lng: -76.5 };
    const result = miteLoadByArea(
      [
        { yardId: 1, address: "1 A St, Dryden, NY 13053", lat: 42.49, lng: -76.3, phase: "before", washes: 2, mites: 12, bees: 600 },
        { yardId: 2, address: "2 B St, dryden, NY 13053", lat: 42.5, lng: -76.29, phase: "before", washes: 1, mites: 9, bees: 300 },
        { yardId: 1, address: "1 A St, Dryden, NY 13053", lat: 42.49, lng: -76.3, phase: "after", washes: 2, mites: 3, bees: 600 },
        { yardId: 3, address: null, lat: 42.7, lng: -76.5, phase: "before", washes: 1, mites: 4, bees: 200 },
      ],
      base,
    );
    expect(result.areas.map((a) => [a.area.name, a.yards, a.before.washes, a.before.mitesPer100, a.after.washes, a.after.mitesPer100])).toEqual([
      ["Dryden", 2, 3, (21 * 100) / 900, 2, 0.5],
      ["North of base", 1, 1, 2, 0, null],
    ]);
    // Dryden: (2.333… − 0.5) ÷ 2.333… = 78.57 % lower.
    expect(result.areas[0].reductionPercent).toBeCloseTo(((21 / 9 - 0.5) * 100) / (21 / 9), 10);
    expect(result.areas[1].reductionPercent).toBeNull();
    expect(result.before).toEqual({ washes: 4, mites: 25, bees: 1100, mitesPer100: (25 * 100) / 1100 });
    expect(result.after).toEqual({ washes: 2, mites: 3, bees: 600, mitesPer100: 0.5 });
  });
});
