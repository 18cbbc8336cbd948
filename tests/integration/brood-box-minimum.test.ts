import knex, { type Knex } from "knex";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { applySyncBatch, confirmRunSafetyCheck, confirmSupersOff, recordTally, TallyRefused } from "~/models/tallies.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import config from "../../knexfile";
import { ALL_SAFE, aCrew, aKey, aStop, type TestCrew, type TestStop } from "./crew-fixtures";
import { migrationConfig } from "./migration-source";
import { resetDatabase } from "./reset-database";

// A living colony has at least one brood box, and a "treated" tally has a dose: the database
// refuses 0, the migration repairs rows that broke the rule before it, and the crew's tally
// (one by one or in a phone's sync batch) is refused with a message, never a 500.

const MIGRATION = "20261204070000_brood_box_minimum.ts";
const migrator: Knex = knex({ ...config, connection: process.env.DATABASE_URL, migrations: migrationConfig(), pool: { min: 0, max: 1 } });

afterAll(async () => {
  await migrator.destroy();
  await stopJobs();
  await db.destroy();
});

const DAY = addCalendarDays(dateInZone(new Date(), defaultBusinessSettings.timeZone), 3);
let crew: TestCrew;
let stop: TestStop;

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew North");
  stop = await aStop(db, crew, { date: DAY, colonies: 3 });
});

/**
 * A colony left with 0 brood boxes, as databases held them before the check: the test drops
 * the check for the moment it writes the row (this file's database is its own).
 */
async function withZeroBoxes(label: string) {
  await db.transaction(async (trx) => {
    await trx.raw("alter table colonies drop constraint colonies_brood_boxes_check");
    await trx("colonies").where({ yard_id: stop.yardId, label }).update({ brood_boxes: 0 });
    await trx.raw("alter table colonies add constraint colonies_brood_boxes_check check (brood_boxes >= 1) not valid");
  });
}

async function readyStop() {
  await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: crew.members[0].id, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: crew.members[0].id, idempotencyKey: aKey("supers") });
}

describe("the database", () => {
  it("refuses a colony or a yard with 0 brood boxes, and a treated tally of 0 g", async () => {
    await expect(db("colonies").where({ yard_id: stop.yardId, label: "H1" }).update({ brood_boxes: 0 })).rejects.toThrow(/colonies_brood_boxes_check/);
    await expect(db("colonies").insert({ yard_id: stop.yardId, label: "H9", brood_boxes: 0 })).rejects.toThrow(/colonies_brood_boxes_check/);
    await expect(db("yards").where({ id: stop.yardId }).update({ brood_boxes_per_colony: 0 })).rejects.toThrow(/yards_brood_boxes_check/);
    const tally = { visit_id: stop.visitId, colony_label: "H1", outcome: "treated" as const };
    await expect(db("tallies").insert({ ...tally, brood_boxes: 1, dose_grams: 0 })).rejects.toThrow(/tallies_treated_dose_check/);
    await expect(db("tallies").insert({ ...tally, brood_boxes: 0, dose_grams: 1 })).rejects.toThrow(/tallies_treated_dose_check/);
    // A skipped colony (a dead-out, say) has no dose, as before.
    await expect(db("tallies").insert({ ...tally, outcome: "skipped", skip_reason: "dead_out", brood_boxes: 0, dose_grams: 0 })).resolves.toBeDefined();
    await expect(db("colonies").insert({ yard_id: stop.yardId, label: "H9", brood_boxes: 1 })).resolves.toBeDefined();
  });
});

describe("the migration", () => {
  it("repairs 0-box yards and colonies and 0 g treated tallies, then applies its checks", async () => {
    await migrator.migrate.down({ name: MIGRATION });
    try {
      // Rows the old schema allowed.
      await db("yards").where({ id: stop.yardId }).update({ brood_boxes_per_colony: 0 });
      await db("colonies").where({ yard_id: stop.yardId, label: "H1" }).update({ brood_boxes: 0 });
      await db("colonies").where({ yard_id: stop.yardId, label: "H3" }).update({ brood_boxes: 0, active: false });
      await db("tallies").insert([
        { visit_id: stop.visitId, colony_label: "H1", outcome: "treated", brood_boxes: 0, dose_grams: 0 },
        { visit_id: stop.visitId, colony_label: "H2", outcome: "treated", brood_boxes: 1, dose_grams: 1 },
      ]);
    } finally {
      await migrator.migrate.up({ name: MIGRATION });
    }
    expect((await db("yards").where({ id: stop.yardId }).first())?.brood_boxes_per_colony).toBe(1);
    const colonies = await db("colonies").where({ yard_id: stop.yardId }).orderBy("label").select("label", "brood_boxes", "active");
    expect(colonies).toEqual([
      { label: "H1", brood_boxes: 1, active: true },
      { label: "H2", brood_boxes: 1, active: true },
      { label: "H3", brood_boxes: 1, active: false },
    ]);
    const tallies = await db("tallies").where({ visit_id: stop.visitId }).orderBy("colony_label").select("colony_label", "outcome", "skip_reason", "skip_note", "dose_grams");
    expect(tallies[0]).toMatchObject({ colony_label: "H1", outcome: "skipped", skip_reason: "other", skip_note: expect.stringMatching(/treated with 0 g/) });
    expect(Number(tallies[0].dose_grams)).toBe(0);
    expect(tallies[1]).toMatchObject({ colony_label: "H2", outcome: "treated", skip_reason: null });
    expect(Number(tallies[1].dose_grams)).toBe(1);
    // The checks are in force again.
    await expect(db("colonies").where({ yard_id: stop.yardId, label: "H1" }).update({ brood_boxes: 0 })).rejects.toThrow(/colonies_brood_boxes_check/);
    const [, pending] = await migrator.migrate.list();
    expect(pending).toEqual([]);
  });
});

describe("the crew's tally", () => {
  it("refuses to record a colony with 0 brood boxes as treated (0 g), and records it as skipped", async () => {
    await withZeroBoxes("H2");
    await readyStop();
    const input = { visitId: stop.visitId, crewId: crew.id, userId: crew.members[0].id, colonyLabel: "H2", outcome: "treated" as const, recordedAt: new Date() };
    const error = await recordTally(db, { ...input, idempotencyKey: aKey("tally") }).then(
      () => null,
      (e: unknown) => e,
    );
    expect(error).toBeInstanceOf(TallyRefused);
    expect((error as TallyRefused).code).toBe("invalid");
    expect((error as TallyRefused).httpStatus).toBe(422);
    expect((error as TallyRefused).message).toMatch(/^H2 has no brood box on record, so its dose would be 0 g/);
    expect((error as TallyRefused).fieldErrors.outcome).toMatch(/cannot be recorded as treated/);
    expect(await db("tallies").where({ visit_id: stop.visitId })).toHaveLength(0);
    expect(await db("applied_changes").where({ kind: "tally" })).toHaveLength(0);

    const skipped = await recordTally(db, { ...input, outcome: "skipped", skipReason: "dead_out", idempotencyKey: aKey("tally") });
    expect(skipped).toMatchObject({ colonyLabel: "H2", outcome: "skipped", doseGrams: 0 });
  });

  it("in a phone's sync batch, refuses only that tally and applies the others", async () => {
    await withZeroBoxes("H2");
    const envelope = { runId: stop.runId, runVersion: 1, createdAt: new Date().toISOString() };
    const tally = (label: string) => ({
      key: aKey("tally"),
      kind: "tally",
      ...envelope,
      payload: { visitId: stop.visitId, colonyLabel: label, outcome: "treated", skipReason: null, skipNote: null, mites: null, beesSampled: null, notes: null, recordedAt: new Date().toISOString() },
    });
    const changes = [
      { key: aKey("safety"), kind: "safety", ...envelope, payload: { runId: stop.runId, items: ALL_SAFE } },
      { key: aKey("supers"), kind: "supers", ...envelope, payload: { visitId: stop.visitId } },
      tally("H1"),
      tally("H2"),
      tally("H3"),
    ];
    const outcomes = await applySyncBatch(db, { crewId: crew.id, userId: crew.members[0].id, changes });
    expect(outcomes.map((o) => o.status)).toEqual(["applied", "applied", "applied", "refused", "applied"]);
    expect(outcomes[3]).toMatchObject({ key: changes[3].key, kind: "tally", code: "invalid", message: expect.stringMatching(/^H2 has no brood box on record/) });
    const recorded = await db("tallies").where({ visit_id: stop.visitId }).orderBy("colony_label").select("colony_label", "outcome", "dose_grams");
    expect(recorded.map((t) => [t.colony_label, t.outcome, Number(t.dose_grams)])).toEqual([
      ["H1", "treated", 1],
      ["H3", "treated", 1],
    ]);
  });
});
