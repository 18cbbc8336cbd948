import { describe, expect, it } from "vitest";
import {
  changeDeadline,
  customerChangeBlock,
  customerMayChange,
  customerMoveWindow,
  firstChangeableDate,
  isInMoveWindow,
  serviceDayStart,
  whomToContact,
} from "~/domain/booking-cutoff";
import { zonedCalendarDate, zonedClockTime } from "~/domain/zoned-time";

const NY = "America/New_York";

// Source: US daylight saving time since 2007 (Energy Policy Act of 2005, 15 U.S.C. § 260a):
// clocks go forward at 02:00 on the second Sunday of March (8 March 2026) and back at 02:00 on
// the first Sunday of November (1 November 2026); New York is UTC−5 in winter, UTC−4 in summer.
// Source: EU summer time (Directive 2000/84/EC): London goes forward at 01:00 UTC on the last
// Sunday of March (29 March 2026); UTC+0 in winter, UTC+1 in summer.

describe("the change cut-off", () => {
  it("is 48 hours before local midnight of the service day on an ordinary day", () => {
    expect(serviceDayStart("2026-03-20", NY).toISOString()).toBe("2026-03-20T04:00:00.000Z");
    expect(changeDeadline("2026-03-20", 48, NY).toISOString()).toBe("2026-03-18T04:00:00.000Z");
    expect(changeDeadline("2026-01-20", 48, NY).toISOString()).toBe("2026-01-18T05:00:00.000Z");
  });

  it("counts real hours over a spring-forward night: 48 hours before Monday 9 March 2026 is 23:00 on Friday 6 March", () => {
    // Monday's midnight is daylight time (UTC−4); 48 hours earlier the clocks still showed standard time.
    expect(serviceDayStart("2026-03-09", NY).toISOString()).toBe("2026-03-09T04:00:00.000Z");
    const deadline = changeDeadline("2026-03-09", 48, NY);
    expect(deadline.toISOString()).toBe("2026-03-07T04:00:00.000Z");
    expect(zonedCalendarDate(deadline, NY)).toBe("2026-03-06");
    expect(zonedClockTime(deadline, NY)).toBe("23:00");
  });

  it("counts real hours over a fall-back night: 48 hours before Monday 2 November 2026 is 01:00 on Saturday 31 October", () => {
    expect(serviceDayStart("2026-11-02", NY).toISOString()).toBe("2026-11-02T05:00:00.000Z");
    const deadline = changeDeadline("2026-11-02", 48, NY);
    expect(deadline.toISOString()).toBe("2026-10-31T05:00:00.000Z");
    expect(zonedCalendarDate(deadline, NY)).toBe("2026-10-31");
    expect(zonedClockTime(deadline, NY)).toBe("01:00");
  });

  it("uses the business's own time zone", () => {
    // Monday 30 March 2026 begins at 00:00 BST = 23:00 UTC on the Sunday.
    expect(serviceDayStart("2026-03-30", "Europe/London").toISOString()).toBe("2026-03-29T23:00:00.000Z");
    expect(changeDeadline("2026-03-30", 24, "Europe/London").toISOString()).toBe("2026-03-28T23:00:00.000Z");
    expect(changeDeadline("2026-03-30", 24, NY).toISOString()).toBe("2026-03-29T04:00:00.000Z");
  });

  it("allows a change until the instant before the deadline, not at it", () => {
    const deadline = changeDeadline("2026-03-09", 48, NY);
    expect(customerMayChange(new Date(deadline.getTime() - 1), "2026-03-09", 48, NY)).toBe(true);
    expect(customerMayChange(deadline, "2026-03-09", 48, NY)).toBe(false);
    expect(customerMayChange(new Date(deadline.getTime() + 60_000), "2026-03-09", 48, NY)).toBe(false);
  });

  it("with no cut-off, closes when the day begins", () => {
    expect(changeDeadline("2026-03-09", 0, NY).toISOString()).toBe("2026-03-09T04:00:00.000Z");
    expect(customerMayChange(new Date("2026-03-09T03:59:00Z"), "2026-03-09", 0, NY)).toBe(true);
  });

  it("refuses cut-offs that are not whole hours of zero or more", () => {
    expect(() => changeDeadline("2026-03-09", -1, NY)).toThrow(RangeError);
    expect(() => changeDeadline("2026-03-09", 1.5, NY)).toThrow(RangeError);
  });

  it("finds the first day still open to changes, across the clock change", () => {
    // Friday 6 March 2026, noon EST: Sunday 8 March began at 05:00 UTC, its deadline (Friday 05:00 UTC) has passed;
    // Monday 9 March's deadline is Saturday 04:00 UTC.
    expect(firstChangeableDate(new Date("2026-03-06T17:00:00Z"), 48, NY)).toBe("2026-03-09");
    // 23:30 EST the same Friday: half an hour past Monday's deadline (23:00 EST), so Tuesday.
    // A count that ignored the clock change (midnight at UTC−5) would still allow Monday.
    expect(firstChangeableDate(new Date("2026-03-07T04:30:00Z"), 48, NY)).toBe("2026-03-10");
    expect(firstChangeableDate(new Date("2026-03-07T03:59:00Z"), 48, NY)).toBe("2026-03-09");
    // No cut-off: tomorrow (today has begun).
    expect(firstChangeableDate(new Date("2026-03-06T17:00:00Z"), 0, NY)).toBe("2026-03-07");
  });
});

describe("the days a customer may move a round to", () => {
  it("lets a first round go to any day from the first changeable day to the last bookable one", () => {
    expect(customerMoveWindow({ firstChangeable: "2026-11-05", lastBookable: "2027-05-01", previousRoundDate: null, intervalDays: 7 })).toEqual({
      first: "2026-11-05",
      last: "2027-05-01",
    });
  });

  it("keeps a later round within two days of the course's interval after the round before it", () => {
    // Round 1 on 3 November, 7 days apart: round 2 from 8 to 12 November.
    const window = customerMoveWindow({ firstChangeable: "2026-11-05", lastBookable: "2027-05-01", previousRoundDate: "2026-11-03", intervalDays: 7 });
    expect(window).toEqual({ first: "2026-11-08", last: "2026-11-12" });
    expect(isInMoveWindow(window, "2026-11-07")).toBe(false);
    expect(isInMoveWindow(window, "2026-11-08")).toBe(true);
    expect(isInMoveWindow(window, "2026-11-12")).toBe(true);
    expect(isInMoveWindow(window, "2026-11-13")).toBe(false);
  });

  it("never puts a later round on or before the round before it, and is cut by the cut-off", () => {
    expect(customerMoveWindow({ firstChangeable: "2026-11-01", lastBookable: "2027-05-01", previousRoundDate: "2026-11-03", intervalDays: 2 })).toEqual({
      first: "2026-11-04",
      last: "2026-11-07",
    });
    expect(customerMoveWindow({ firstChangeable: "2026-11-11", lastBookable: "2027-05-01", previousRoundDate: "2026-11-03", intervalDays: 7 })).toEqual({
      first: "2026-11-11",
      last: "2026-11-12",
    });
    expect(customerMoveWindow({ firstChangeable: "2026-11-13", lastBookable: "2027-05-01", previousRoundDate: "2026-11-03", intervalDays: 7 })).toBeNull();
    expect(isInMoveWindow(null, "2026-11-13")).toBe(false);
  });
});

describe("whether a customer may change a visit", () => {
  const base = { status: "scheduled", onPublishedRun: false, serviceDate: "2026-03-20", now: new Date("2026-03-10T12:00:00Z"), cutoffHours: 48, timeZone: NY };

  it("allows a scheduled visit off the crews' runs before the cut-off", () => {
    expect(customerChangeBlock(base)).toBeNull();
  });

  it("says why not otherwise", () => {
    expect(customerChangeBlock({ ...base, status: "cancelled" })).toBe("cancelled");
    expect(customerChangeBlock({ ...base, status: "done" })).toBe("started");
    expect(customerChangeBlock({ ...base, status: "in_progress" })).toBe("started");
    expect(customerChangeBlock({ ...base, status: "deferred" })).toBe("deferred");
    expect(customerChangeBlock({ ...base, onPublishedRun: true })).toBe("published");
    expect(customerChangeBlock({ ...base, now: new Date("2026-03-18T04:00:00Z") })).toBe("cutoff");
  });
});

describe("whom to contact", () => {
  it("names the phone and e-mail from settings, whichever are given", () => {
    expect(whomToContact({ name: "North Slope Hive Care", phone: "607-555-0100", email: "office@example.test" })).toBe(
      "call North Slope Hive Care on 607-555-0100 or e-mail office@example.test",
    );
    expect(whomToContact({ name: "North Slope Hive Care", phone: "607-555-0100", email: "" })).toBe("call North Slope Hive Care on 607-555-0100");
    expect(whomToContact({ name: "North Slope Hive Care", phone: " ", email: "office@example.test" })).toBe("e-mail North Slope Hive Care at office@example.test");
    expect(whomToContact({ name: "", phone: "", email: "" })).toBe("contact us");
  });
});
