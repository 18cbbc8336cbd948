import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { correctedColony } from "~/components/crew/field-state";
import { crewFieldRun } from "~/models/crew-field.server";
import { applySyncBatch, confirmRunSafetyCheck, confirmSupersOff, finishVisit, recordTally, TallyRefused } from "~/models/tallies.server";
import { saveBusinessSettings } from "~/models/settings.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { ALL_SAFE, aCrew, aKey, aStop, type TestCrew, type TestStop } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

// What the crew finds at the hive: brood boxes, box type and brood corrected with the tally
// (the colony's record and the dose follow), and brood found in a course planned broodless
// (the course gets the rounds of a course with brood, and the customer is told).

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const DATE = "2026-11-10";
// Not the defaults, so the rounds and interval can only come from these settings.
const ROUNDS_WITH_BROOD = 4;
const INTERVAL_DAYS = 6;
let crew: TestCrew;
let crewUser: number;

beforeEach(async () => {
  await resetDatabase(db);
  const [owner] = await db("users").insert({ email: "owner.findings@example.test", password_hash: "x", role: "owner", name: "Owner" }).returning("id");
  await saveBusinessSettings(db, { ...defaultBusinessSettings, roundsWithBrood: ROUNDS_WITH_BROOD, roundIntervalDays: INTERVAL_DAYS }, Number(owner.id));
  crew = await aCrew(db, "Crew Findings");
  crewUser = crew.members[0].id;
});

async function readyStop(input: { rounds: number; colonies?: number; broodBoxes?: number }): Promise<TestStop> {
  const stop = await aStop(db, crew, { date: DATE, colonies: input.colonies ?? 2, broodBoxes: input.broodBoxes ?? 1, rounds: input.rounds });
  await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: crewUser, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: crewUser, idempotencyKey: aKey("supers") });
  return stop;
}

function tallyChange(stop: TestStop, colonyLabel: string, findings: Record<string, unknown> = {}) {
  return {
    key: aKey("tally"),
    kind: "tally",
    runId: stop.runId,
    createdAt: new Date().toISOString(),
    payload: { visitId: stop.visitId, colonyLabel, outcome: "treated", recordedAt: new Date().toISOString(), ...findings },
  };
}

function finish(stop: TestStop, finishKey = aKey("finish")) {
  return finishVisit(db, { visitId: stop.visitId, crewId: crew.id, userId: crewUser, finishKey });
}

describe("corrections at the hive", () => {
  it("correct the colony's record and dose it from what the crew found", async () => {
    const stop = await readyStop({ rounds: 1, broodBoxes: 1 });
    const [outcome] = await applySyncBatch(db, {
      crewId: crew.id,
      userId: crewUser,
      changes: [tallyChange(stop, "H1", { broodBoxes: 3, boxType: "medium", broodSeen: true })],
    });
    expect(outcome).toMatchObject({ status: "applied", kind: "tally" });
    // 3 medium brood boxes × 0.7 g per medium box (the default rate) // common practice
    expect(outcome.result).toMatchObject({ broodBoxes: 3, boxType: "medium", broodSeen: true, doseGrams: 2.1 });

    const colony = await db("colonies").where({ yard_id: stop.yardId, label: "H1" }).first("brood_boxes", "box_type", "brood_status");
    expect(colony).toEqual({ brood_boxes: 3, box_type: "medium", brood_status: "brood" });
    const tally = await db("tallies").where({ visit_id: stop.visitId, colony_label: "H1" }).first("brood_boxes", "box_type", "brood_seen", "dose_grams");
    expect({ ...tally, dose_grams: Number(tally!.dose_grams) }).toEqual({ brood_boxes: 3, box_type: "medium", brood_seen: true, dose_grams: 2.1 });
    const audit = await db("audit_log").where({ action: "colony.correct" }).select("before", "after");
    expect(audit).toHaveLength(1);
    expect(audit[0].before).toMatchObject({ broodBoxes: 1, boxType: "deep", broodStatus: "broodless" });
    expect(audit[0].after).toMatchObject({ broodBoxes: 3, boxType: "medium", broodStatus: "brood" });

    // A colony tallied without corrections keeps its record and its dose.
    const plain = await recordTally(db, { visitId: stop.visitId, crewId: crew.id, userId: crewUser, idempotencyKey: aKey("tally"), colonyLabel: "H2", outcome: "treated", recordedAt: new Date() });
    // 1 deep brood box × 1 g per brood box. // Source: US label, EPA Reg. No. 73291-2, as cited in Tellarini Prieto et al. 2024
    expect(plain).toMatchObject({ broodBoxes: 1, boxType: "deep", broodSeen: null, doseGrams: 1 });
    expect(await db("audit_log").where({ action: "colony.correct" })).toHaveLength(1);
  });

  it("records no brood seen as a broodless colony", async () => {
    const stop = await readyStop({ rounds: 3, broodBoxes: 2 });
    const result = await recordTally(db, { visitId: stop.visitId, crewId: crew.id, userId: crewUser, idempotencyKey: aKey("tally"), colonyLabel: "H1", outcome: "treated", recordedAt: new Date(), broodSeen: false });
    expect(result).toMatchObject({ broodSeen: false, broodBoxes: 2, doseGrams: 2 });
    expect(await db("colonies").where({ yard_id: stop.yardId, label: "H1" }).first("brood_status", "brood_boxes")).toEqual({ brood_status: "broodless", brood_boxes: 2 });
  });

  it("refuses an invalid correction at its field and changes nothing", async () => {
    const stop = await readyStop({ rounds: 1 });
    const [boxes, type] = await applySyncBatch(db, {
      crewId: crew.id,
      userId: crewUser,
      changes: [tallyChange(stop, "H1", { broodBoxes: 7 }), tallyChange(stop, "H2", { boxType: "jumbo" })],
    });
    expect(boxes).toMatchObject({ status: "refused", code: "invalid" });
    expect(boxes.fieldErrors?.["payload.broodBoxes"]).toBe("Enter the brood boxes from 1 to 6.");
    expect(type).toMatchObject({ status: "refused", code: "invalid" });
    expect(type.fieldErrors?.["payload.boxType"]).toBe("Choose the box type: deep, medium or nuc.");

    const error = await recordTally(db, {
      visitId: stop.visitId,
      crewId: crew.id,
      userId: crewUser,
      idempotencyKey: aKey("tally"),
      colonyLabel: "H1",
      outcome: "treated",
      recordedAt: new Date(),
      broodBoxes: "1.5",
    }).then(
      () => null,
      (e: unknown) => e,
    );
    expect(error).toBeInstanceOf(TallyRefused);
    expect((error as TallyRefused).fieldErrors.broodBoxes).toBe("Enter the brood boxes as a whole number.");

    expect(await db("tallies").where({ visit_id: stop.visitId })).toHaveLength(0);
    expect(await db("colonies").where({ yard_id: stop.yardId }).orderBy("label").select("brood_boxes", "box_type")).toEqual([
      { brood_boxes: 1, box_type: "deep" },
      { brood_boxes: 1, box_type: "deep" },
    ]);
  });
});

describe("the phone's view of a correction before it is sent", () => {
  it("doses the corrected colony from the rates it was given", async () => {
    const stop = await readyStop({ rounds: 1, broodBoxes: 1 });
    const field = (await crewFieldRun(db, crew.id, DATE))!;
    const colony = field.stops.find((s) => s.visitId === stop.visitId)!.colonies[0];
    const tally = { colonyLabel: colony.label, outcome: "treated" as const, skipReason: null, skipNote: null, mites: null, beesSampled: null, notes: null };
    // 2 medium brood boxes × 0.7 g (the default rate) // common practice
    expect(correctedColony(colony, { ...tally, broodBoxes: 2, boxType: "medium" }, field.settings)).toMatchObject({ broodBoxes: 2, boxType: "medium", doseGrams: 1.4 });
    expect(correctedColony(colony, tally, field.settings)).toBe(colony);
  });
});

describe("brood found in a course planned broodless", () => {
  async function tallyAll(stop: TestStop, broodSeen: (label: string) => boolean | null) {
    const outcomes = await applySyncBatch(db, {
      crewId: crew.id,
      userId: crewUser,
      changes: stop.labels.map((label) => tallyChange(stop, label, { broodSeen: broodSeen(label) })),
    });
    expect(outcomes.map((o) => o.status)).toEqual(stop.labels.map(() => "applied"));
  }

  it("adds the rounds of a course with brood, schedules round 2 and tells the customer", async () => {
    const stop = await readyStop({ rounds: 1, colonies: 2 });
    await tallyAll(stop, (label) => (label === "H2" ? true : null));
    const result = await finish(stop);

    const nextDate = addCalendarDays(DATE, INTERVAL_DAYS);
    expect(result).toMatchObject({ alreadyFinished: false, roundsAdded: ROUNDS_WITH_BROOD - 1, courseComplete: false, nextVisitDate: nextDate, nextVisitStatus: "scheduled" });
    const course = await db("courses").where({ id: stop.courseId }).first("rounds_planned", "interval_days", "brood_status", "status");
    expect(course).toEqual({ rounds_planned: ROUNDS_WITH_BROOD, interval_days: INTERVAL_DAYS, brood_status: "brood", status: "active" });
    expect((await db("yards").where({ id: stop.yardId }).first("brood_status"))!.brood_status).toBe("brood");
    const next = await db("visits").where({ course_id: stop.courseId, round_number: 2 }).select("id", "service_date", "status");
    expect(next).toHaveLength(1);
    expect(next[0]).toMatchObject({ service_date: nextDate, status: "scheduled" });
    const audit = await db("audit_log").where({ action: "course.rounds_added", entity_id: String(stop.courseId) }).select("before", "after");
    expect(audit).toHaveLength(1);
    expect(audit[0].before).toMatchObject({ roundsPlanned: 1 });
    expect(audit[0].after).toMatchObject({ roundsPlanned: ROUNDS_WITH_BROOD, roundsAdded: ROUNDS_WITH_BROOD - 1, visitId: stop.visitId });

    const email = await db("email_log").where({ visit_id: stop.visitId, kind: "visit_report" }).first("text_body");
    expect(email!.text_body).toContain(`found brood in the colonies`);
    expect(email!.text_body).toContain(`we added ${ROUNDS_WITH_BROOD - 1} more rounds, ${ROUNDS_WITH_BROOD} in all`);
    expect(email!.text_body).toMatch(/The next round is on [^.]+\./);
    expect(email!.text_body).toContain(`1 of ${ROUNDS_WITH_BROOD}`);

    // The crew's phone shows it in the finish summary.
    const field = await crewFieldRun(db, crew.id, DATE);
    const fieldStop = field!.stops.find((s) => s.visitId === stop.visitId)!;
    expect(fieldStop).toMatchObject({ status: "done", roundsAdded: ROUNDS_WITH_BROOD - 1, nextRoundDate: nextDate, roundsPlanned: ROUNDS_WITH_BROOD });
    expect(fieldStop.tallies.H2.broodSeen).toBe(true);

    // Finishing again, by the same key or another, adds nothing more.
    const again = await finish(stop);
    expect(again).toMatchObject({ alreadyFinished: true, roundsAdded: ROUNDS_WITH_BROOD - 1 });
    expect((await db("courses").where({ id: stop.courseId }).first("rounds_planned"))!.rounds_planned).toBe(ROUNDS_WITH_BROOD);
    expect(await db("visits").where({ course_id: stop.courseId })).toHaveLength(2);
    expect(await db("audit_log").where({ action: "course.rounds_added" })).toHaveLength(1);
    expect(await db("email_log").where({ visit_id: stop.visitId, kind: "visit_report" })).toHaveLength(1);
  });

  it("adds nothing when no brood was seen", async () => {
    const stop = await readyStop({ rounds: 1, colonies: 2 });
    await tallyAll(stop, (label) => (label === "H1" ? false : null));
    const result = await finish(stop);
    expect(result).toMatchObject({ roundsAdded: 0, courseComplete: true, nextVisitId: null });
    expect(await db("courses").where({ id: stop.courseId }).first("rounds_planned", "status")).toEqual({ rounds_planned: 1, status: "complete" });
    expect((await db("yards").where({ id: stop.yardId }).first("brood_status"))!.brood_status).toBe("broodless");
    expect(await db("visits").where({ course_id: stop.courseId })).toHaveLength(1);
    expect(await db("audit_log").where({ action: "course.rounds_added" })).toHaveLength(0);
    const email = await db("email_log").where({ visit_id: stop.visitId, kind: "visit_report" }).first("text_body");
    expect(email!.text_body).not.toContain("found brood");
  });

  it("leaves a course with brood as planned", async () => {
    const stop = await readyStop({ rounds: 3, colonies: 1 });
    await tallyAll(stop, () => true);
    const result = await finish(stop);
    expect(result.roundsAdded).toBe(0);
    expect((await db("courses").where({ id: stop.courseId }).first("rounds_planned"))!.rounds_planned).toBe(3);
  });
});
