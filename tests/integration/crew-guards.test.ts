import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { crewFieldRun } from "~/models/crew-field.server";
import { applySyncBatch, confirmRunSafetyCheck, confirmSupersOff, crewStopDetail, recordTally, TallyRefused } from "~/models/tallies.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { ALL_SAFE, aCrew, aKey, aStop, type TestCrew, type TestStop } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

// The crew's guards at a stop: the dose by box type, the season's cap on applications per
// colony, and the air temperature read at the yard (through the phone's sync path).

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const DATE = "2026-11-10";
let crew: TestCrew;
let stop: TestStop;
let crewUser: number;

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew North");
  crewUser = crew.members[0].id;
  stop = await aStop(db, crew, { date: DATE, colonies: 3, broodBoxes: 2 });
  await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: crewUser, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: crewUser, idempotencyKey: aKey("supers") });
});

function treat(colonyLabel: string, overrides: Partial<Parameters<typeof recordTally>[1]> = {}) {
  return recordTally(db, {
    visitId: stop.visitId,
    crewId: crew.id,
    userId: crewUser,
    idempotencyKey: aKey("tally"),
    colonyLabel,
    outcome: "treated",
    recordedAt: new Date(),
    ...overrides,
  });
}

async function colonyId(label: string): Promise<number> {
  const row = await db("colonies").where({ yard_id: stop.yardId, label }).first("id");
  return Number(row!.id);
}

/** Earlier visits of the stop's yard, each with the colony treated, on the given days. */
async function treatedBefore(label: string, dates: string[]): Promise<void> {
  const id = await colonyId(label);
  for (const [i, date] of dates.entries()) {
    const [visit] = await db("visits")
      .insert({ course_id: stop.courseId, yard_id: stop.yardId, round_number: 10 + i, service_date: date, colonies_expected: 3, status: "done" })
      .returning("id");
    await db("tallies").insert({ visit_id: visit.id, colony_id: id, colony_label: label, outcome: "treated", brood_boxes: 2, dose_grams: 2, recorded_at: new Date(`${date}T12:00:00Z`) });
  }
}

async function refusal(promise: Promise<unknown>): Promise<TallyRefused> {
  const error = await promise.then(
    () => null,
    (e: unknown) => e,
  );
  expect(error).toBeInstanceOf(TallyRefused);
  return error as TallyRefused;
}

describe("the dose by box type", () => {
  it("doses a medium and a nuc colony at their own rates and stores the box type", async () => {
    await db("colonies").where({ yard_id: stop.yardId, label: "H1" }).update({ box_type: "medium" });
    await db("colonies").where({ yard_id: stop.yardId, label: "H2" }).update({ box_type: "nuc" });
    const medium = await treat("H1");
    const nuc = await treat("H2");
    const deep = await treat("H3");
    // 2 brood boxes × 0.7 g per medium box (the default rate) // common practice
    expect(medium.doseGrams).toBe(1.4);
    // 2 brood boxes × 0.5 g per nuc box (the default rate) // common practice
    expect(nuc.doseGrams).toBe(1);
    expect(deep.doseGrams).toBe(2);
    const stored = await db("tallies").where({ visit_id: stop.visitId }).orderBy("colony_label").select("colony_label", "box_type", "dose_grams");
    expect(stored.map((t) => [t.colony_label, t.box_type, Number(t.dose_grams)])).toEqual([
      ["H1", "medium", 1.4],
      ["H2", "nuc", 1],
      ["H3", "deep", 2],
    ]);

    const detail = await crewStopDetail(db, { visitId: stop.visitId, crewId: crew.id });
    const h1 = detail.colonies.find((c) => c.label === "H1")!;
    expect(h1).toMatchObject({ boxType: "medium", doseGrams: 1.4 });
    expect(h1.doseAssumption).toBe("2 medium brood boxes × 0.7 g = 1.4 g, in 1 vaporizer load of at most 2 g");
    expect(detail.doseAboveLabel).toEqual([]);
  });
});

describe("the season's cap on applications per colony", () => {
  it("refuses a fifth treatment in the calendar year, at the outcome", async () => {
    await treatedBefore("H1", ["2026-04-01", "2026-04-15", "2026-05-01", "2026-09-01"]);
    const error = await refusal(treat("H1"));
    expect(error.code).toBe("invalid");
    expect(error.fieldErrors.outcome).toMatch(/has had 4 applications this season.*\(4\)/);
    expect(await db("tallies").where({ visit_id: stop.visitId })).toHaveLength(0);
    // Skipping the colony is still recorded.
    await expect(treat("H1", { outcome: "skipped", skipReason: "other", skipNote: "Cap reached" })).resolves.toMatchObject({ outcome: "skipped" });
    // The crew's phone sees it at the cap before tapping: 4 earlier of 4.
    const run = await crewFieldRun(db, crew.id, DATE);
    const colony = run!.stops.find((s) => s.visitId === stop.visitId)!.colonies.find((c) => c.label === "H1");
    expect(colony).toMatchObject({ applicationsBefore: 4, applicationCap: 4 });
  });

  it("allows the fourth, and does not count last year's treatments", async () => {
    await treatedBefore("H1", ["2025-10-01", "2026-04-01", "2026-05-01", "2026-09-01"]);
    await expect(treat("H1")).resolves.toMatchObject({ outcome: "treated", doseGrams: 2 });
    const detail = await crewStopDetail(db, { visitId: stop.visitId, crewId: crew.id });
    // This visit's own treatment is left out: 3 earlier this year, last year's not counted.
    expect(detail.colonies.find((c) => c.label === "H1")).toMatchObject({ applicationsBefore: 3, applicationCap: 4 });
    expect(detail.colonies.find((c) => c.label === "H2")).toMatchObject({ applicationsBefore: 0 });
  });

  it("lets the crew re-record a colony at the same visit once it is at the cap", async () => {
    await treatedBefore("H1", ["2026-04-01", "2026-05-01", "2026-09-01"]);
    await treat("H1", { recordedAt: new Date(Date.now() - 60_000) });
    const again = await treat("H1", { mites: 3, beesSampled: 300 });
    expect(again).toMatchObject({ outcome: "treated", mites: 3 });
  });
});

describe("the air temperature at the yard", () => {
  const change = (key: string, airTempC: unknown) => ({ key, kind: "air_temp", runId: stop.runId, createdAt: new Date().toISOString(), payload: { visitId: stop.visitId, airTempC } });

  it("is recorded through the sync batch once per key, audited, and warned about outside the band", async () => {
    const key = aKey("air");
    const [first] = await applySyncBatch(db, { crewId: crew.id, userId: crewUser, changes: [change(key, 2.5)] });
    expect(first).toMatchObject({ status: "applied", kind: "air_temp" });
    // The business works in US units (the default): 2.5 °C is 36.5 °F, the 4–30 °C band 39.2–86 °F.
    expect(first.message).toMatch(/36\.5 °F is below the business's band for treating \(39\.2–86 °F\)/);
    const [again] = await applySyncBatch(db, { crewId: crew.id, userId: crewUser, changes: [change(key, 2.5)] });
    expect(again.status).toBe("duplicate");
    expect(await db("audit_log").where({ action: "visit.air_temp" })).toHaveLength(1);
    // Its key is kept with every other change's key (applied_changes takes the air_temp kind).
    const applied = await db("applied_changes").where({ key }).select("kind", "visit_id", "result");
    expect(applied.map((r) => [r.kind, Number(r.visit_id)])).toEqual([["air_temp", stop.visitId]]);
    expect(applied[0].result).toMatchObject({ visitId: stop.visitId, airTempC: 2.5 });
    expect(again.result).toMatchObject({ airTempC: 2.5 });
    expect(Number((await db("visits").where({ id: stop.visitId }).first("air_temp_c"))!.air_temp_c)).toBe(2.5);

    const [inBand] = await applySyncBatch(db, { crewId: crew.id, userId: crewUser, changes: [change(aKey("air"), "18.4")] });
    expect(inBand).toMatchObject({ status: "applied" });
    expect(inBand.message).toBeUndefined();
    const detail = await crewStopDetail(db, { visitId: stop.visitId, crewId: crew.id });
    expect(detail).toMatchObject({ airTempC: 18.4, airTempWarning: null });
  });

  it("refuses a key used before for another kind of change", async () => {
    const key = aKey("shared");
    await treat("H1", { idempotencyKey: key });
    const [out] = await applySyncBatch(db, { crewId: crew.id, userId: crewUser, changes: [change(key, 12)] });
    expect(out).toMatchObject({ status: "refused", code: "invalid" });
    expect(out.message).toMatch(/used for another change/);
    expect((await db("visits").where({ id: stop.visitId }).first("air_temp_c"))!.air_temp_c).toBeNull();
  });

  it("is refused out of range, at its field", async () => {
    const [out] = await applySyncBatch(db, { crewId: crew.id, userId: crewUser, changes: [change(aKey("air"), 61)] });
    expect(out).toMatchObject({ status: "refused", code: "invalid" });
    expect(out.fieldErrors?.["payload.airTempC"]).toBe("Enter the air temperature from -50 to 60 °C.");
    expect((await db("visits").where({ id: stop.visitId }).first("air_temp_c"))!.air_temp_c).toBeNull();
  });
});
