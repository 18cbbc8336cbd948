import { describe, expect, it } from "vitest";
import {
  minutesAfterZonedMidnight,
  zonedCalendarDate,
  zonedClockTime,
  zonedDateTimeToInstant,
  zoneOffsetMinutes,
} from "~/domain/zoned-time";

// Source: US Energy Policy Act of 2005 (15 U.S.C. §260a): daylight time ends at 02:00 local
// time on the first Sunday of November (2026-11-01) and begins at 02:00 on the second
// Sunday of March (2026-03-08); New York is UTC−5 in standard time, UTC−4 in daylight time.
// Source: EU Directive 2000/84/EC: summer time ends at 01:00 UTC on the last Sunday of
// October (2026-10-25); London is UTC+1 in summer, UTC+0 in winter.
const NY = "America/New_York";

describe("zoned service-day times", () => {
  it("puts 08:00 on the days around 2026-11-01 at the right UTC instant", () => {
    expect(zonedDateTimeToInstant("2026-10-31", 8 * 60, NY).toISOString()).toBe("2026-10-31T12:00:00.000Z");
    expect(zonedDateTimeToInstant("2026-11-01", 8 * 60, NY).toISOString()).toBe("2026-11-01T13:00:00.000Z");
    expect(zonedDateTimeToInstant("2026-11-02", 8 * 60, NY).toISOString()).toBe("2026-11-02T13:00:00.000Z");
  });

  it("takes the first of the two 01:30s when the clocks go back, and 00:59/03:00 either side", () => {
    expect(zonedDateTimeToInstant("2026-11-01", 90, NY).toISOString()).toBe("2026-11-01T05:30:00.000Z");
    expect(zonedDateTimeToInstant("2026-11-01", 59, NY).toISOString()).toBe("2026-11-01T04:59:00.000Z");
    expect(zonedDateTimeToInstant("2026-11-01", 180, NY).toISOString()).toBe("2026-11-01T08:00:00.000Z");
  });

  it("moves a skipped wall time forward by the gap when the clocks go forward", () => {
    expect(zonedDateTimeToInstant("2026-03-08", 150, NY).toISOString()).toBe("2026-03-08T07:30:00.000Z");
    expect(zonedDateTimeToInstant("2026-03-08", 180, NY).toISOString()).toBe("2026-03-08T07:00:00.000Z");
  });

  it("keeps fractions of a minute and works in other zones", () => {
    expect(zonedDateTimeToInstant("2026-11-01", 8 * 60 + 12.5, NY).toISOString()).toBe("2026-11-01T13:12:30.000Z");
    expect(zonedDateTimeToInstant("2026-10-24", 600, "Europe/London").toISOString()).toBe("2026-10-24T09:00:00.000Z");
    expect(zonedDateTimeToInstant("2026-10-25", 600, "Europe/London").toISOString()).toBe("2026-10-25T10:00:00.000Z");
    expect(zonedDateTimeToInstant("2026-07-01", 0, "UTC").toISOString()).toBe("2026-07-01T00:00:00.000Z");
  });

  it("reads instants back as wall-clock minutes, dates, clock times and offsets", () => {
    for (const date of ["2026-10-31", "2026-11-01", "2026-11-02", "2026-03-08"]) {
      for (const minutes of [0, 45, 179, 180, 480, 725.5, 1020, 1439]) {
        const instant = zonedDateTimeToInstant(date, minutes, NY);
        const skipped = date === "2026-03-08" && minutes >= 120 && minutes < 180;
        if (!skipped) expect(minutesAfterZonedMidnight(instant, date, NY)).toBeCloseTo(minutes, 9);
      }
    }
    expect(zoneOffsetMinutes(new Date("2026-10-31T12:00:00Z"), NY)).toBe(-240);
    expect(zoneOffsetMinutes(new Date("2026-11-01T13:00:00Z"), NY)).toBe(-300);
    expect(zonedCalendarDate(new Date("2026-11-02T03:30:00Z"), NY)).toBe("2026-11-01");
    expect(zonedClockTime(new Date("2026-11-01T13:05:29Z"), NY)).toBe("08:05");
  });

  it("refuses malformed dates and minutes", () => {
    expect(() => zonedDateTimeToInstant("2026-11-1", 0, NY)).toThrow(RangeError);
    expect(() => zonedDateTimeToInstant("2026-11-01", Number.NaN, NY)).toThrow(RangeError);
  });
});
