import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { defaultBusinessSettings } from "~/domain/settings";
import { formatMitesPer100 } from "~/domain/mites";
import { saveBusinessSettings } from "~/models/settings.server";
import { confirmRunSafetyCheck, confirmSupersOff, crewStopDetail, finishVisit, recordTally, TallyRefused, visitReportForCustomer } from "~/models/tallies.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { ALL_SAFE, aCrew, aKey, aStop, type TestCrew, type TestStop } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

// A November service day: the default thresholds put 3 mites per 100 bees in force
// (USDA-ARS general threshold, Nov–Jan, app/domain/settings.ts).
const DATE = "2026-11-10";
let crew: TestCrew;
let other: TestCrew;
let stop: TestStop;
let crewUser: number;

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew North");
  other = await aCrew(db, "Crew South");
  crewUser = crew.members[0].id;
  stop = await aStop(db, crew, { date: DATE, colonies: 4, broodBoxes: (i) => (i === 0 ? 2 : 1) });
});

async function refusal(promise: Promise<unknown>): Promise<TallyRefused> {
  const error = await promise.then(
    () => null,
    (e: unknown) => e,
  );
  expect(error).toBeInstanceOf(TallyRefused);
  return error as TallyRefused;
}

async function readyStop(s: TestStop = stop, c: TestCrew = crew) {
  await confirmRunSafetyCheck(db, { runId: s.runId, crewId: c.id, userId: c.members[0].id, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId: s.visitId, crewId: c.id, userId: c.members[0].id, idempotencyKey: aKey("supers") });
}

function tally(overrides: Partial<Parameters<typeof recordTally>[1]> = {}) {
  return {
    visitId: stop.visitId,
    crewId: crew.id,
    userId: crewUser,
    idempotencyKey: aKey("tally"),
    colonyLabel: "H1",
    outcome: "treated" as const,
    recordedAt: new Date(),
    ...overrides,
  };
}

describe("the run's safety check", () => {
  it("needs all four items, names what is missing, and puts the run in progress once", async () => {
    const error = await refusal(
      confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: crewUser, items: { ...ALL_SAFE, eyeProtection: false, gloves: false } }),
    );
    expect(error.code).toBe("invalid");
    expect(error.message).toMatch(/sealed eye protection, acid-resistant gloves/);
    expect((await db("runs").where({ id: stop.runId }).first())?.safety_checked_at).toBeNull();

    const first = await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: crewUser, items: ALL_SAFE });
    expect(first).toMatchObject({ runId: stop.runId, status: "in_progress", alreadyChecked: false });
    const again = await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: crew.members[1].id, items: ALL_SAFE });
    expect(again).toMatchObject({ alreadyChecked: true, safetyCheckedAt: first.safetyCheckedAt });
    expect(await db("audit_log").where({ action: "run.safety_check" })).toHaveLength(1);
  });

  it("is refused as not found for another crew's run", async () => {
    const error = await refusal(confirmRunSafetyCheck(db, { runId: stop.runId, crewId: other.id, userId: other.members[0].id, items: ALL_SAFE }));
    expect(error.code).toBe("not_your_run");
    expect(error.httpStatus).toBe(404);
  });
});

describe("supers off", () => {
  it("needs the safety check first, then starts the visit; a second confirmation changes nothing", async () => {
    const key = aKey("supers");
    expect((await refusal(confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: crewUser, idempotencyKey: key }))).code).toBe("safety_not_checked");
    await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: crewUser, items: ALL_SAFE });
    const first = await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: crewUser, idempotencyKey: key });
    expect(first).toMatchObject({ status: "in_progress", alreadyConfirmed: false, supersConfirmedBy: crewUser });
    const replay = await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: crewUser, idempotencyKey: key });
    expect(replay).toMatchObject({ ...first, duplicate: true });
    const otherPhone = await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: crew.members[1].id, idempotencyKey: aKey("supers") });
    expect(otherPhone).toMatchObject({ alreadyConfirmed: true, supersConfirmedAt: first.supersConfirmedAt });
    const visit = await db("visits").where({ id: stop.visitId }).first();
    expect(visit).toMatchObject({ status: "in_progress", supers_confirmed_by: crewUser });
    expect(visit?.started_at).not.toBeNull();
    expect(await db("audit_log").where({ action: "visit.supers_off" })).toHaveLength(1);
  });
});

describe("tallies", () => {
  it("cannot record a treatment while the supers are not confirmed off, but can record a skip", async () => {
    await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: crewUser, items: ALL_SAFE });
    const error = await refusal(recordTally(db, tally()));
    expect(error.code).toBe("supers_not_confirmed");
    expect(error.message).toMatch(/honey supers are off/);
    expect(await db("tallies")).toHaveLength(0);

    const skipped = await recordTally(db, tally({ outcome: "skipped", skipReason: "supers_on", skipNote: "Super still on" }));
    expect(skipped).toMatchObject({ outcome: "skipped", skipReason: "supers_on", doseGrams: 0 });
  });

  it("refuses a tally for a colony of another crew's run, as not found", async () => {
    const theirs = await aStop(db, other, { date: DATE, colonies: 2 });
    await readyStop(theirs, other);
    const error = await refusal(recordTally(db, tally({ visitId: theirs.visitId })));
    expect(error.code).toBe("not_your_run");
    expect(error.httpStatus).toBe(404);
    // Nor may a member of another crew claim to be on this one.
    await readyStop();
    expect((await refusal(recordTally(db, tally({ userId: other.members[0].id })))).code).toBe("not_your_run");
    // Nor is a stop on a draft run (being re-planned) the crew's to work.
    const draft = await aStop(db, crew, { date: "2026-11-11", colonies: 1, runStatus: "draft" });
    expect((await refusal(recordTally(db, tally({ visitId: draft.visitId, outcome: "skipped", skipReason: "dead_out" })))).code).toBe("not_your_run");
    expect(await db("tallies")).toHaveLength(0);
  });

  it("needs a reason for a skipped colony, and a note for the reason “other”", async () => {
    await readyStop();
    const noReason = await refusal(recordTally(db, tally({ outcome: "skipped" })));
    expect(noReason.code).toBe("invalid");
    expect(noReason.fieldErrors.skipReason).toBe("Choose why the colony was skipped.");
    const other = await refusal(recordTally(db, tally({ outcome: "skipped", skipReason: "other" })));
    expect(other.fieldErrors.skipNote).toMatch(/Say why/);
    const bees = await refusal(recordTally(db, tally({ mites: 4 })));
    expect(bees.fieldErrors.beesSampled).toMatch(/bees/);
    expect(await db("tallies")).toHaveLength(0);
  });

  it("counts the same key once, and returns the first result", async () => {
    await readyStop();
    const input = tally({ mites: 9, beesSampled: 300 });
    const first = await recordTally(db, input);
    const again = await recordTally(db, { ...input, outcome: "skipped", skipReason: "dead_out" });
    const [a, b] = await Promise.all([recordTally(db, input), recordTally(db, input)]);
    for (const replay of [again, a, b]) expect(replay).toEqual({ ...first, duplicate: true });
    const rows = await db("tallies").where({ visit_id: stop.visitId });
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ outcome: "treated", idempotency_key: input.idempotencyKey });
    expect(await db("applied_changes").where({ key: input.idempotencyKey })).toHaveLength(1);
    expect(await db("audit_log").where({ action: "tally.record" })).toHaveLength(1);
  });

  it("replaces a colony's tally with a later change, and keeps a later one over an earlier one sent late", async () => {
    await readyStop();
    const t0 = new Date(Date.now() - 60_000);
    await recordTally(db, tally({ recordedAt: t0 }));
    const changed = await recordTally(db, tally({ outcome: "skipped", skipReason: "queenless", recordedAt: new Date(t0.getTime() + 10_000) }));
    expect(changed).toMatchObject({ outcome: "skipped", skipReason: "queenless", doseGrams: 0 });
    // The other phone's older tally arrives last: the later one stays.
    const late = await recordTally(db, tally({ outcome: "treated", recordedAt: new Date(t0.getTime() + 5_000) }));
    expect(late).toMatchObject({ superseded: true, outcome: "skipped" });
    const rows = await db("tallies").where({ visit_id: stop.visitId });
    expect(rows).toHaveLength(1);
    expect(rows[0].outcome).toBe("skipped");
  });

  it("doses each colony from its brood boxes and the dose rate in settings", async () => {
    await saveBusinessSettings(db, { ...defaultBusinessSettings, doseGramsPerBroodBox: 2.5, labelMaximumGramsPerBroodBox: 4 }, crewUser);
    await readyStop();
    const h1 = await recordTally(db, tally({ colonyLabel: "H1" })); // 2 brood boxes × 2.5 g
    const h2 = await recordTally(db, tally({ colonyLabel: "H2" })); // 1 brood box × 2.5 g
    expect(h1).toMatchObject({ broodBoxes: 2, doseGrams: 5 });
    expect(h2).toMatchObject({ broodBoxes: 1, doseGrams: 2.5 });
    expect((await db("tallies").where({ colony_label: "H1" }).first())?.dose_grams).toBe(5);
  });

  it("gives mites per 100 bees and the verdict against the month's threshold", async () => {
    await readyStop();
    // Source: COLOSS BEEBOOK Vol. II (Dietemann et al. 2013): mites ÷ bees × 100;
    // 9 in 300 = 3.0 (arithmetic, sources.md); 43 in 310 = 13.87 → 13.9 (COLOSS worked example).
    const at = await recordTally(db, tally({ colonyLabel: "H1", mites: 9, beesSampled: 300 }));
    expect(at.mitesPer100).toBeCloseTo(3, 12);
    expect(at.miteLoad).toMatchObject({ threshold: 3, level: "at" });
    const above = await recordTally(db, tally({ colonyLabel: "H2", mites: 43, beesSampled: 310 }));
    expect(above.miteLoad).toMatchObject({ threshold: 3, level: "above" });
    expect(formatMitesPer100(above.miteLoad!.mitesPer100)).toBe("13.9");
    const below = await recordTally(db, tally({ colonyLabel: "H3", mites: "2", beesSampled: "400" }));
    expect(below.miteLoad?.level).toBe("below");
    const none = await recordTally(db, tally({ colonyLabel: "H4" }));
    expect(none).toMatchObject({ mitesPer100: null, miteLoad: null });
  });

  it("takes a wash by its sample volume, estimating the bees from the setting, and says so in the report", async () => {
    await saveBusinessSettings(db, { ...defaultBusinessSettings, beesPer100Ml: 250 }, crewUser);
    await readyStop();
    // Half a US cup = 118.29 mL (NIST Handbook 44), entered as 118.3; at 250 bees per 100 mL:
    // 118.3 × 250 / 100 = 295.75 → 296 bees. 9 mites: 9 × 100 / 296 = 3.04, shown "3.0" — at the
    // November threshold of 3 (USDA-ARS general threshold), not above it.
    const byVolume = await recordTally(db, tally({ colonyLabel: "H1", mites: 9, beesSampled: null, sampleMl: "118.3" }));
    expect(byVolume).toMatchObject({ mites: 9, beesSampled: 296, beesEstimated: true, sampleMl: 118.3 });
    // 9 ÷ 296 × 100 = 3.04…, shown "3.0": at the threshold of 3.
    expect(byVolume.mitesPer100).toBeCloseTo(3.0405, 4);
    expect(byVolume.miteLoad).toMatchObject({ threshold: 3, level: "at" });
    const row = await db("tallies").where({ visit_id: stop.visitId, colony_label: "H1" }).first();
    expect(row).toMatchObject({ bees_sampled: 296, bees_estimated: true });
    expect(Number(row?.wash_sample_ml)).toBe(118.3);

    // Bees counted win over a volume given beside them.
    const counted = await recordTally(db, tally({ colonyLabel: "H2", mites: 9, beesSampled: 300, sampleMl: 118.3 }));
    expect(counted).toMatchObject({ beesSampled: 300, beesEstimated: false, sampleMl: 118.3 });
    expect(counted.mitesPer100).toBeCloseTo(3, 12);
    // A volume without mites is half a wash count.
    const half = await refusal(recordTally(db, tally({ colonyLabel: "H3", sampleMl: 118.3 })));
    expect(half.fieldErrors.mites).toMatch(/mites were counted/);

    await recordTally(db, tally({ colonyLabel: "H3" }));
    await recordTally(db, tally({ colonyLabel: "H4" }));
    await finishVisit(db, { visitId: stop.visitId, crewId: crew.id, userId: crewUser, finishKey: aKey("finish") });
    const report = await visitReportForCustomer(db, { visitId: stop.visitId, customerId: stop.customerId });
    expect(report?.colonies[0]).toMatchObject({ label: "H1", beesSampled: 296, beesEstimated: true, sampleMl: 118.3, level: "at" });
    expect(report?.colonies[1]).toMatchObject({ label: "H2", beesSampled: 300, beesEstimated: false });
    const email = await db("email_log").where({ visit_id: stop.visitId, kind: "visit_report" }).first("text_body");
    expect(email?.text_body).toContain("H1: 9 mites in about 296 bees (estimated from a 118.3 mL sample) = 3.0 per 100 bees, at the action threshold (3 per 100 bees)");
    expect(email?.text_body).toContain("H2: 9 mites in 300 bees = 3.0 per 100 bees, at the action threshold");
  });

  it("refuses a colony that is not at the yard", async () => {
    await readyStop();
    await db("colonies").where({ yard_id: stop.yardId, label: "H4" }).update({ active: false });
    for (const label of ["H9", "H4"]) {
      const error = await refusal(recordTally(db, tally({ colonyLabel: label })));
      expect(error.code).toBe("invalid");
      expect(error.message).toContain(label);
    }
  });

  it("after the visit is finished, refuses a new key and answers the old key with its first result", async () => {
    await readyStop();
    const keys: string[] = [];
    for (const label of stop.labels) {
      const input = tally({ colonyLabel: label });
      keys.push(input.idempotencyKey);
      await recordTally(db, input);
    }
    await finishVisit(db, { visitId: stop.visitId, crewId: crew.id, userId: crewUser, finishKey: aKey("finish") });
    const error = await refusal(recordTally(db, tally({ colonyLabel: "H1", outcome: "skipped", skipReason: "aggressive" })));
    expect(error.code).toBe("visit_finished");
    const replay = await recordTally(db, tally({ colonyLabel: "H1", idempotencyKey: keys[0] }));
    expect(replay).toMatchObject({ duplicate: true, outcome: "treated" });
    expect(await db("tallies").where({ visit_id: stop.visitId, outcome: "treated" })).toHaveLength(4);
  });
});

describe("the stop screen", () => {
  it("shows the yard, colonies with doses, tallies so far, supers state and the run's version", async () => {
    await readyStop();
    await recordTally(db, tally({ colonyLabel: "H2", mites: 3, beesSampled: 300 }));
    const detail = await crewStopDetail(db, { visitId: stop.visitId, crewId: crew.id });
    expect(detail).toMatchObject({
      visitId: stop.visitId,
      status: "in_progress",
      run: { id: stop.runId, version: 1, status: "in_progress", safetyChecked: true },
      yard: { name: expect.stringMatching(/^Yard /), accessNotes: "Gate code 1234", geoUri: expect.stringMatching(/^geo:42\.\d+,-76\.4$/) },
      supers: { confirmed: true },
      totals: { colonies: 4, tallied: 1, treated: 1, skipped: 0, grams: 1, gramsPlanned: 5 },
    });
    expect(detail.colonies.map((c) => [c.label, c.broodBoxes, c.doseGrams, c.tally?.outcome ?? null])).toEqual([
      ["H1", 2, 2, null],
      ["H2", 1, 1, "treated"],
      ["H3", 1, 1, null],
      ["H4", 1, 1, null],
    ]);
    expect((await refusal(crewStopDetail(db, { visitId: stop.visitId, crewId: other.id }))).code).toBe("not_your_run");
  });
});
