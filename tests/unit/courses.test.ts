import fc from "fast-check";
import { afterEach, describe, expect, it } from "vitest";
import {
  addCalendarDays,
  calendarDaysBetween,
  isCourseComplete,
  isIsoDate,
  monthOfIsoDate,
  nextOpenRound,
  planCourse,
  postponeRound,
  rescheduleFollowingRounds,
  roundsNeeded,
  type CourseRound,
} from "~/domain/courses";

const dates = (rounds: CourseRound[]) => rounds.map((r) => r.date);

describe("calendar dates", () => {
  it("recognises real ISO dates only", () => {
    expect(isIsoDate("2026-10-28")).toBe(true);
    expect(isIsoDate("2028-02-29")).toBe(true); // 2028 is a leap year
    expect(isIsoDate("2026-02-29")).toBe(false);
    expect(isIsoDate("2100-02-29")).toBe(false); // century rule: not a leap year
    expect(isIsoDate("2026-13-01")).toBe(false);
    expect(isIsoDate("2026-1-01")).toBe(false);
    expect(isIsoDate("2026-10-28T00:00:00Z")).toBe(false);
  });

  it("adds days across month ends, leap days and the year end", () => {
    expect(addCalendarDays("2026-01-28", 7)).toBe("2026-02-04");
    expect(addCalendarDays("2026-02-25", 7)).toBe("2026-03-04");
    expect(addCalendarDays("2028-02-25", 7)).toBe("2028-03-03");
    expect(addCalendarDays("2026-12-28", 7)).toBe("2027-01-04");
    expect(addCalendarDays("2027-01-04", -7)).toBe("2026-12-28");
    expect(addCalendarDays("2026-04-30", 0)).toBe("2026-04-30");
    expect(() => addCalendarDays("2026-04-30", 1.5)).toThrow(RangeError);
    expect(() => addCalendarDays("30/04/2026", 1)).toThrow(RangeError);
  });

  it("counts whole days between dates", () => {
    expect(calendarDaysBetween("2026-12-31", "2027-01-01")).toBe(1);
    expect(calendarDaysBetween("2026-01-01", "2027-01-01")).toBe(365);
    expect(calendarDaysBetween("2028-01-01", "2029-01-01")).toBe(366);
    expect(calendarDaysBetween("2026-11-08", "2026-11-01")).toBe(-7);
  });

  it("reads the month", () => {
    expect(monthOfIsoDate("2026-11-01")).toBe(11);
    expect(() => monthOfIsoDate("2026-11-31")).toThrow(RangeError);
  });

  it("agrees with an independent count of days since 1970", () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 40_000 }), fc.integer({ min: -400, max: 400 }), (start, days) => {
        const from = new Date(start * 86_400_000).toISOString().slice(0, 10);
        const expected = new Date((start + days) * 86_400_000).toISOString().slice(0, 10);
        expect(addCalendarDays(from, days)).toBe(expected);
        expect(calendarDaysBetween(from, expected)).toBe(days);
      }),
    );
  });
});

describe("planCourse", () => {
  it("plans one round for a broodless colony", () => {
    // Source: EU summary of product characteristics (UK VMD, 2015): broodless colony, one application.
    const rounds = planCourse({ broodStatus: "broodless", firstDate: "2026-12-05", roundsWithBrood: 3, intervalDays: 7 });
    expect(rounds).toEqual([{ roundNumber: 1, date: "2026-12-05", status: "scheduled" }]);
  });

  it("plans the rounds with brood at the interval", () => {
    // common practice: 3 rounds 5–7 days apart
    const rounds = planCourse({ broodStatus: "brood", firstDate: "2026-09-01", roundsWithBrood: 3, intervalDays: 7 });
    expect(rounds.map((r) => r.roundNumber)).toEqual([1, 2, 3]);
    expect(dates(rounds)).toEqual(["2026-09-01", "2026-09-08", "2026-09-15"]);
    expect(rounds.every((r) => r.status === "scheduled")).toBe(true);
  });

  it("plans an unknown brood status as brood", () => {
    // Source: EU summary (UK VMD, 2015): oxalic acid does not reach mites under cappings.
    const unknown = planCourse({ broodStatus: "unknown", firstDate: "2026-09-01", roundsWithBrood: 3, intervalDays: 5 });
    const brood = planCourse({ broodStatus: "brood", firstDate: "2026-09-01", roundsWithBrood: 3, intervalDays: 5 });
    expect(unknown).toEqual(brood);
    expect(roundsNeeded("unknown", 4)).toBe(4);
    expect(roundsNeeded("broodless", 4)).toBe(1);
  });

  it("allows the 7 rounds at 5-day spacing of the 2022 trial", () => {
    // Source: Berry et al. 2022, J. Insect Sci., PMC8825467 — 7 rounds 5 days apart.
    const rounds = planCourse({ broodStatus: "brood", firstDate: "2026-08-28", roundsWithBrood: 7, intervalDays: 5 });
    expect(rounds).toHaveLength(7);
    expect(rounds[6].date).toBe("2026-09-27"); // 30 days after the first
  });

  it("crosses the November daylight-saving change without drifting a day", () => {
    // US daylight saving time ends on the first Sunday of November: 2026-11-01.
    const rounds = planCourse({ broodStatus: "brood", firstDate: "2026-10-28", roundsWithBrood: 3, intervalDays: 7 });
    expect(dates(rounds)).toEqual(["2026-10-28", "2026-11-04", "2026-11-11"]);
  });

  it("crosses the March daylight-saving change", () => {
    // US daylight saving time starts on the second Sunday of March: 2027-03-14.
    const rounds = planCourse({ broodStatus: "brood", firstDate: "2027-03-10", roundsWithBrood: 3, intervalDays: 4 });
    expect(dates(rounds)).toEqual(["2027-03-10", "2027-03-14", "2027-03-18"]);
  });

  it("crosses month ends and the year end", () => {
    expect(dates(planCourse({ broodStatus: "brood", firstDate: "2026-12-21", roundsWithBrood: 3, intervalDays: 7 }))).toEqual([
      "2026-12-21",
      "2026-12-28",
      "2027-01-04",
    ]);
    expect(dates(planCourse({ broodStatus: "brood", firstDate: "2026-01-31", roundsWithBrood: 2, intervalDays: 30 }))).toEqual([
      "2026-01-31",
      "2026-03-02",
    ]);
  });

  describe("in other process time zones", () => {
    const original = process.env.TZ;
    afterEach(() => {
      if (original === undefined) delete process.env.TZ;
      else process.env.TZ = original;
    });

    it("gives the same dates whatever the server's time zone", () => {
      const input = { broodStatus: "brood" as const, firstDate: "2026-10-28", roundsWithBrood: 4, intervalDays: 7 };
      const results = ["America/New_York", "Pacific/Chatham", "Australia/Lord_Howe", "Asia/Kolkata", "UTC"].map((tz) => {
        process.env.TZ = tz;
        return dates(planCourse(input));
      });
      for (const result of results) expect(result).toEqual(["2026-10-28", "2026-11-04", "2026-11-11", "2026-11-18"]);
    });
  });

  it("rejects impossible plans", () => {
    expect(() => planCourse({ broodStatus: "brood", firstDate: "2026-10-28", roundsWithBrood: 0, intervalDays: 7 })).toThrow(RangeError);
    expect(() => planCourse({ broodStatus: "brood", firstDate: "2026-10-28", roundsWithBrood: 3, intervalDays: 0 })).toThrow(RangeError);
    expect(() => planCourse({ broodStatus: "brood", firstDate: "2026-02-30", roundsWithBrood: 3, intervalDays: 7 })).toThrow(RangeError);
    // a broodless course has one round, so its interval does not matter
    expect(planCourse({ broodStatus: "broodless", firstDate: "2026-10-28", roundsWithBrood: 3, intervalDays: 0 })).toHaveLength(1);
  });

  it("always gives strictly increasing dates spaced by the interval", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 36_500 }),
        fc.constantFrom("brood" as const, "broodless" as const, "unknown" as const),
        fc.integer({ min: 1, max: 7 }),
        fc.integer({ min: 1, max: 14 }),
        (day, broodStatus, roundsWithBrood, intervalDays) => {
          const firstDate = addCalendarDays("2000-01-01", day);
          const rounds = planCourse({ broodStatus, firstDate, roundsWithBrood, intervalDays });
          expect(rounds).toHaveLength(broodStatus === "broodless" ? 1 : roundsWithBrood);
          expect(rounds[0].date).toBe(firstDate);
          for (let i = 1; i < rounds.length; i++) {
            expect(rounds[i].date > rounds[i - 1].date).toBe(true);
            expect(calendarDaysBetween(rounds[i - 1].date, rounds[i].date)).toBe(intervalDays);
          }
        },
      ),
    );
  });
});

describe("course completion", () => {
  const plan = () => planCourse({ broodStatus: "brood", firstDate: "2026-10-01", roundsWithBrood: 3, intervalDays: 7 });

  it("is complete only when every round is done", () => {
    const rounds = plan();
    expect(isCourseComplete(rounds)).toBe(false);
    expect(isCourseComplete(rounds.map((r) => ({ ...r, status: "done" as const })))).toBe(true);
    expect(isCourseComplete(rounds.map((r, i) => ({ ...r, status: i < 2 ? ("done" as const) : ("cancelled" as const) })))).toBe(false);
    expect(isCourseComplete([])).toBe(false);
  });

  it("finds the next open round", () => {
    const rounds = plan().map((r, i) => ({ ...r, status: i === 0 ? ("done" as const) : r.status }));
    expect(nextOpenRound(rounds)?.roundNumber).toBe(2);
    expect(nextOpenRound(rounds.map((r) => ({ ...r, status: "done" as const })))).toBeUndefined();
  });
});

describe("rescheduling rounds", () => {
  const plan = () => planCourse({ broodStatus: "brood", firstDate: "2026-10-21", roundsWithBrood: 3, intervalDays: 7 });

  it("moves a skipped round and the later ones, keeping the interval", () => {
    const rounds = plan(); // 10-21, 10-28, 11-04
    const moved = rescheduleFollowingRounds(rounds, 2, "2026-10-31");
    expect(dates(moved)).toEqual(["2026-10-21", "2026-10-31", "2026-11-07"]);
    expect(rounds[1].date).toBe("2026-10-28"); // the input is left alone
  });

  it("can bring a round forward, but not onto or before the previous round", () => {
    expect(dates(rescheduleFollowingRounds(plan(), 3, "2026-11-02"))).toEqual(["2026-10-21", "2026-10-28", "2026-11-02"]);
    expect(() => rescheduleFollowingRounds(plan(), 2, "2026-10-21")).toThrow(RangeError);
    expect(() => rescheduleFollowingRounds(plan(), 2, "2026-10-20")).toThrow(RangeError);
  });

  it("moves the first round and everything after it over the year end", () => {
    const rounds = planCourse({ broodStatus: "brood", firstDate: "2026-12-16", roundsWithBrood: 3, intervalDays: 7 });
    expect(dates(postponeRound(rounds, 1, 10))).toEqual(["2026-12-26", "2027-01-02", "2027-01-09"]);
  });

  it("refuses to move rounds already done or started", () => {
    const rounds = plan().map((r, i) => ({ ...r, status: i === 0 ? ("done" as const) : r.status }));
    expect(() => rescheduleFollowingRounds(rounds, 1, "2026-10-22")).toThrow(RangeError);
    const laterDone = plan().map((r, i) => ({ ...r, status: i === 2 ? ("in_progress" as const) : r.status }));
    expect(() => rescheduleFollowingRounds(laterDone, 2, "2026-10-30")).toThrow(RangeError);
    expect(() => rescheduleFollowingRounds(plan(), 4, "2026-11-30")).toThrow(RangeError);
    expect(() => postponeRound(plan(), 9, 1)).toThrow(RangeError);
  });

  it("keeps dates strictly increasing and later gaps unchanged", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 2, max: 7 }),
        fc.integer({ min: 1, max: 14 }),
        fc.integer({ min: 1, max: 7 }),
        fc.integer({ min: 0, max: 60 }),
        (count, interval, pick, delay) => {
          const rounds = planCourse({ broodStatus: "brood", firstDate: "2026-10-28", roundsWithBrood: count, intervalDays: interval });
          const roundNumber = Math.min(pick, count);
          const moved = postponeRound(rounds, roundNumber, delay);
          for (let i = 1; i < moved.length; i++) {
            expect(moved[i].date > moved[i - 1].date).toBe(true);
            const gap = calendarDaysBetween(moved[i - 1].date, moved[i].date);
            expect(gap).toBe(i === roundNumber - 1 ? interval + delay : interval);
          }
        },
      ),
    );
  });
});
