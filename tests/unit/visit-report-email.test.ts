import { describe, expect, it } from "vitest";
import { LABEL_DEFERENCE_NOTICE, SAFETY_CAUTIONS } from "~/domain/safety";
import { miteCountLine, visitReportEmail, type ReportColony } from "~/emails/visit-report";

const colony = (over: Partial<ReportColony>): ReportColony => ({
  label: "H1",
  outcome: "treated",
  skipReason: null,
  skipNote: null,
  doseGrams: 1,
  mites: null,
  beesSampled: null,
  mitesPer100: null,
  threshold: null,
  level: null,
  ...over,
});

const input = {
  customerName: "Robin <Hood>",
  yardName: `Hill & Dale "North"`,
  serviceDate: "2026-11-10",
  roundNumber: 1,
  roundsPlanned: 3,
  treated: 2,
  skipped: 1,
  grams: 3,
  productName: "Oxalic acid dihydrate",
  colonies: [
    // Source: COLOSS BEEBOOK Vol. II (Dietemann et al. 2013): 43 mites in 310 bees = 13.9 per 100.
    colony({ label: "H1", doseGrams: 2, mites: 43, beesSampled: 310, mitesPer100: 13.87, threshold: 3, level: "above" }),
    colony({ label: "H2", mites: 9, beesSampled: 300, mitesPer100: 3, threshold: 3, level: "at" }),
    colony({ label: "H3", outcome: "skipped", skipReason: "dead_out", skipNote: "No cluster", doseGrams: 0 }),
  ],
  nextRound: { date: "2026-11-17", deferred: false },
  courseComplete: false,
  portalUrl: "http://127.0.0.1:3000/portal/visits/7",
};

describe("visit report e-mail", () => {
  it("gives the date, yard, counts, grams, skips with reasons, mite counts with verdicts and the next round", () => {
    const email = visitReportEmail(input);
    expect(email.subject).toBe(`Visit report: Hill & Dale "North", Tue, Nov 10, 2026`);
    expect(email.text).toContain("Colonies treated: 2\nColonies skipped: 1\nOxalic acid dihydrate applied: 3.00 g\nNext round: Tue, Nov 17, 2026");
    expect(email.text).toContain("- H3: Dead-out (no living colony) — No cluster");
    expect(email.text).toContain("- H1: 43 mites in 310 bees = 13.9 per 100 bees, above the action threshold (3 per 100 bees)");
    expect(email.text).toContain("- H2: 9 mites in 300 bees = 3.0 per 100 bees, at the action threshold (3 per 100 bees)");
    expect(email.text).toContain("Round 2 is booked for Tue, Nov 17, 2026.");
    expect(email.text).toContain("See the visit report: http://127.0.0.1:3000/portal/visits/7");
    expect(email.html).toContain("Hill &amp; Dale &quot;North&quot;");
    expect(email.html).not.toContain("<Hood>");
  });

  it("ends with every oxalic acid vapor caution and the label notice", () => {
    const email = visitReportEmail(input);
    for (const caution of SAFETY_CAUTIONS) expect(email.text).toContain(`- ${caution.title}. ${caution.text}`);
    expect(email.text).toContain(LABEL_DEFERENCE_NOTICE);
  });

  it("says when the next round's day is full, and when the course is complete", () => {
    expect(visitReportEmail({ ...input, nextRound: { date: "2026-11-17", deferred: true } }).text).toContain("that day is full, so we will confirm the date with you");
    expect(visitReportEmail({ ...input, nextRound: null, courseComplete: true, roundNumber: 3 }).text).toContain("the treatment course for this yard is complete");
  });

  it("leaves colonies without a wash count out of the mite counts", () => {
    expect(miteCountLine(colony({}))).toBeNull();
    expect(visitReportEmail({ ...input, colonies: [colony({})] }).text).not.toContain("Mite counts");
  });
});

describe("a wash whose bees were estimated from the sample's volume", () => {
  it("says so in the mite count line; a counted wash reads as before", () => {
    // 9 mites in a half cup (118.3 mL) at 300 bees per 100 mL: about 355 bees, 2.54 per 100.
    const estimated = colony({ mites: 9, beesSampled: 355, beesEstimated: true, sampleMl: 118.3, mitesPer100: 2.54, threshold: 3, level: "below" });
    expect(miteCountLine(estimated)).toBe(
      "H1: 9 mites in about 355 bees (estimated from a 118.3 mL sample) = 2.5 per 100 bees, below the action threshold (3 per 100 bees)",
    );
    expect(miteCountLine(colony({ mites: 9, beesSampled: 300, mitesPer100: 3, threshold: 3, level: "at" }))).toBe(
      "H1: 9 mites in 300 bees = 3.0 per 100 bees, at the action threshold (3 per 100 bees)",
    );
    const email = visitReportEmail({ ...input, colonies: [estimated] });
    expect(email.text).toContain("estimated from the sample's volume");
  });
});
