import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { defaultBusinessSettings } from "~/domain/settings";
import { deleteCustomerAccount } from "~/models/account-data.server";
import { anonymiseExpiredRecordHolds } from "~/models/record-retention.server";
import { saveBusinessSettings } from "~/models/settings.server";
import { confirmRunSafetyCheck, confirmSupersOff, finishVisit, recordTally } from "~/models/tallies.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { ALL_SAFE, aCrew, aKey, aStop, type TestCrew, type TestStop } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

// A deleted customer's application-record fields are held until records_kept_until, fixed at
// the deletion from the retention then. When the owner raises the retention, the holds still
// running are lengthened to the new rule; lowering it never shortens a hold.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const TREATED_ON = "2026-11-10";
let crew: TestCrew;
let owner: number;

async function setRetention(years: number) {
  await saveBusinessSettings(db, { ...defaultBusinessSettings, minimumPerVisitCents: 0, recordRetentionYears: years }, owner);
}

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew Holds");
  const [user] = await db("users").insert({ email: "owner.holds@example.test", password_hash: "x", role: "owner", name: "Owner" }).returning("id");
  owner = Number(user.id);
  await setRetention(3);
});

/** A customer whose every colony was treated on `date` and the visit finished. */
async function aTreatedCustomer(date = TREATED_ON, outcome: "treated" | "skipped" = "treated"): Promise<TestStop> {
  const stop = await aStop(db, crew, { date, colonies: 2, rounds: 1 });
  const userId = crew.members[0].id;
  await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId, idempotencyKey: aKey("supers") });
  for (const label of stop.labels) {
    await recordTally(db, {
      visitId: stop.visitId,
      crewId: crew.id,
      userId,
      idempotencyKey: aKey("tally"),
      colonyLabel: label,
      outcome,
      skipReason: outcome === "skipped" ? "dead_out" : null,
      recordedAt: new Date(),
    });
  }
  await finishVisit(db, { visitId: stop.visitId, crewId: crew.id, userId, finishKey: aKey("finish") });
  return stop;
}

const keptUntil = async (customerId: number) => (await db("customers").where({ id: customerId }).first("records_kept_until"))!.records_kept_until;

describe("raising the record retention", () => {
  it("moves a running hold out by the years added; lowering it afterwards leaves the hold", async () => {
    const stop = await aTreatedCustomer();
    await deleteCustomerAccount(db, { customerId: stop.customerId, actorUserId: owner });
    expect(await keptUntil(stop.customerId)).toBe("2029-11-10");

    await setRetention(5);
    expect(await keptUntil(stop.customerId)).toBe("2031-11-10");

    await setRetention(1);
    expect(await keptUntil(stop.customerId)).toBe("2031-11-10");
  });

  it("audits each hold it lengthens, by the owner, beside the settings change", async () => {
    const stop = await aTreatedCustomer();
    await deleteCustomerAccount(db, { customerId: stop.customerId, actorUserId: owner });
    const since = Number(((await db("audit_log").first(db.raw("coalesce(max(id), 0)::int as id"))) as unknown as { id: number }).id);
    await setRetention(5);
    const rows = await db("audit_log").where("id", ">", since).orderBy("id").select("action", "actor_user_id", "entity_type", "entity_id", "before", "after");
    expect(rows.map((r) => r.action)).toEqual(["settings.update", "customer.records_hold_extended"]);
    expect(rows[1]).toMatchObject({
      actor_user_id: owner,
      entity_type: "customer",
      entity_id: String(stop.customerId),
      before: { keptUntil: "2029-11-10" },
      after: { keptUntil: "2031-11-10", recordRetentionYears: 5 },
    });

    // Saving again at 5 years, or lower, lengthens nothing and audits no hold.
    const again = Number(((await db("audit_log").first(db.raw("coalesce(max(id), 0)::int as id"))) as unknown as { id: number }).id);
    await setRetention(5);
    await setRetention(4);
    expect(await db("audit_log").where("id", ">", again).where({ action: "customer.records_hold_extended" }).first("id")).toBeUndefined();
  });

  it("leaves customers without a hold alone: not deleted, anonymised at once, or already anonymised by the sweep", async () => {
    const notDeleted = await aTreatedCustomer();
    const neverTreated = await aTreatedCustomer(TREATED_ON, "skipped");
    const swept = await aTreatedCustomer("2026-10-01");
    await deleteCustomerAccount(db, { customerId: neverTreated.customerId, actorUserId: owner });
    await deleteCustomerAccount(db, { customerId: swept.customerId, actorUserId: owner });
    expect(await keptUntil(neverTreated.customerId)).toBeNull();
    // The sweep on the day after the hold ends anonymises the swept customer's records.
    const sweep = await anonymiseExpiredRecordHolds(db, "2029-10-02");
    expect(sweep.anonymised).toEqual([swept.customerId]);

    await setRetention(5);
    expect(await keptUntil(notDeleted.customerId)).toBeNull();
    expect(await keptUntil(neverTreated.customerId)).toBeNull();
    expect(await keptUntil(swept.customerId)).toBeNull();
  });

  it("takes the hold to the last treatment plus the new retention for each customer", async () => {
    const early = await aTreatedCustomer("2026-09-15");
    const late = await aTreatedCustomer("2026-11-20");
    await deleteCustomerAccount(db, { customerId: early.customerId, actorUserId: owner });
    await deleteCustomerAccount(db, { customerId: late.customerId, actorUserId: owner });
    await setRetention(4);
    expect(await keptUntil(early.customerId)).toBe("2030-09-15");
    expect(await keptUntil(late.customerId)).toBe("2030-11-20");
  });
});
