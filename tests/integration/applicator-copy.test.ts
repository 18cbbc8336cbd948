import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { defaultBusinessSettings } from "~/domain/settings";
import { applicationRecords } from "~/models/application-records.server";
import { saveBusinessSettings } from "~/models/settings.server";
import { applicationRecordForVisit, confirmRunSafetyCheck, confirmSupersOff, finishVisit, recordTally } from "~/models/tallies.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { down as dropApplicatorCopy, up as addApplicatorCopy } from "../../migrations/20261205080854_visit_applicator";
import { ALL_SAFE, aCrew, aKey, aStop, type TestCrew, type TestStop } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

// Application records must read as they were when the visit was finished: the applicators'
// names and licence numbers are kept on the visit then, so a crew member who later changes
// name or licence on their profile (or is deactivated) does not rewrite past records.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const DATE = "2026-11-10";
let crew: TestCrew;
let recorder: { id: number; name: string };
let finisher: { id: number; name: string };

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew Ledger", "NY-C-11111");
  [recorder, finisher] = crew.members;
  await db("users").where({ id: finisher.id }).update({ applicator_licence: "NY-C-22222" });
  const [owner] = await db("users").insert({ email: "owner.ledger@example.test", password_hash: "x", role: "owner", name: "Owner" }).returning("id");
  await saveBusinessSettings(db, { ...defaultBusinessSettings, productName: "Test oxalic acid dihydrate", productRegistrationNumber: "EPA Reg. No. 00000-0" }, Number(owner.id));
});

/** Every colony treated by the first member, the visit finished by the second. */
async function aFinishedStop(): Promise<TestStop> {
  const stop = await aStop(db, crew, { date: DATE, colonies: 3 });
  await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: recorder.id, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: recorder.id, idempotencyKey: aKey("supers") });
  for (const label of stop.labels) {
    await recordTally(db, {
      visitId: stop.visitId,
      crewId: crew.id,
      userId: recorder.id,
      idempotencyKey: aKey("tally"),
      colonyLabel: label,
      outcome: "treated",
      recordedAt: new Date(),
    });
  }
  await finishVisit(db, { visitId: stop.visitId, crewId: crew.id, userId: finisher.id, finishKey: aKey("finish") });
  return stop;
}

/** What the profile and the staff page can change later: name, licence, deactivation. */
async function changeAccounts() {
  await db("users").where({ id: recorder.id }).update({ name: "Rena Renamed", applicator_licence: "NY-C-99999", disabled_at: new Date() });
  await db("users").where({ id: finisher.id }).update({ name: "Finn Renamed", applicator_licence: null });
}

const officeRecord = async (stop: TestStop) =>
  (await applicationRecords(db, { from: DATE, to: DATE, crewId: null, customerId: stop.customerId })).rows.find((r) => r.visitId === stop.visitId);

describe("the applicator kept on a finished visit", () => {
  it("keeps the finisher's name and licence, and the records' applicators, on the visit", async () => {
    const stop = await aFinishedStop();
    const visit = await db("visits").where({ id: stop.visitId }).first("applicator_name", "applicator_licence", "applicators");
    expect(visit).toEqual({
      applicator_name: finisher.name,
      applicator_licence: "NY-C-22222",
      applicators: [{ name: recorder.name, licence: "NY-C-11111" }],
    });
  });

  it("the visit's application record still names the finisher and licence after their account changes", async () => {
    const stop = await aFinishedStop();
    expect(await applicationRecordForVisit(db, stop.visitId)).toMatchObject({ applicatorName: finisher.name, applicatorLicence: "NY-C-22222" });
    await changeAccounts();
    expect(await applicationRecordForVisit(db, stop.visitId)).toMatchObject({ applicatorName: finisher.name, applicatorLicence: "NY-C-22222" });
  });

  it("the office records still name who applied it, with the licence then, after their account changes", async () => {
    const stop = await aFinishedStop();
    expect((await officeRecord(stop))?.applicators).toEqual([{ name: recorder.name, licence: "NY-C-11111" }]);
    await changeAccounts();
    expect((await officeRecord(stop))?.applicators).toEqual([{ name: recorder.name, licence: "NY-C-11111" }]);
  });

  it("the visit's application record keeps the product of the finish when settings change", async () => {
    const stop = await aFinishedStop();
    const owner = (await db("users").where({ role: "owner" }).first("id"))!;
    await saveBusinessSettings(db, { ...defaultBusinessSettings, productName: "Another product", productRegistrationNumber: "EPA Reg. No. 11111-1" }, Number(owner.id));
    expect(await applicationRecordForVisit(db, stop.visitId)).toMatchObject({ productName: "Test oxalic acid dihydrate", productRegistrationNumber: "EPA Reg. No. 00000-0" });
  });

  it("a visit finished before the copy was kept reads the accounts as they are now", async () => {
    const stop = await aFinishedStop();
    await db("visits").where({ id: stop.visitId }).update({ applicator_name: null, applicator_licence: null, applicators: null });
    await changeAccounts();
    expect(await applicationRecordForVisit(db, stop.visitId)).toMatchObject({ applicatorName: "Finn Renamed", applicatorLicence: null });
    expect((await officeRecord(stop))?.applicators).toEqual([{ name: "Rena Renamed", licence: "NY-C-99999" }]);
  });

  it("the migration copies the accounts as they are now onto visits finished before it", async () => {
    const stop = await aFinishedStop();
    await dropApplicatorCopy(db);
    await changeAccounts();
    await addApplicatorCopy(db);
    const visit = await db("visits").where({ id: stop.visitId }).first("applicator_name", "applicator_licence", "applicators");
    expect(visit).toEqual({
      applicator_name: "Finn Renamed",
      applicator_licence: null,
      applicators: [{ name: "Rena Renamed", licence: "NY-C-99999" }],
    });
    const open = await aStop(db, crew, { date: DATE, colonies: 1 });
    expect(await db("visits").where({ id: open.visitId }).first("applicator_name", "applicators")).toEqual({ applicator_name: null, applicators: null });
  });
});
