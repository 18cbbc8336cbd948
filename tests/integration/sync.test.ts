import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { syncBatchSchema } from "~/forms/sync";
import { applySyncBatch, type SyncOutcome } from "~/models/tallies.server";
import { cancelVisit, rescheduleVisit } from "~/models/visit-changes.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { ALL_SAFE, aCrew, aKey, aStop, rowCounts, type TestCrew, type TestStop } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const TODAY = dateInZone(new Date(), defaultBusinessSettings.timeZone);
const DAY = addCalendarDays(TODAY, 3);
let crew: TestCrew;
let other: TestCrew;
let dispatcher: number;
let stop: TestStop;

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew North");
  other = await aCrew(db, "Crew South");
  const [user] = await db("users").insert({ email: "dispatch@example.test", password_hash: "x", role: "dispatcher", name: "Dispatch" }).returning("id");
  dispatcher = Number(user.id);
  stop = await aStop(db, crew, { date: DAY, colonies: 3, rounds: 2, intervalDays: 7 });
});

/** A phone's queue for one stop, shaped as the crew screens send it (app/components/crew/field-types.ts). */
function phoneQueue(s: TestStop, options: { skipH2?: "with reason" | "without reason" } = {}) {
  const envelope = { runId: s.runId, runVersion: 1, createdAt: new Date().toISOString() };
  const tally = (label: string) => ({
    key: aKey("tally"),
    kind: "tally",
    ...envelope,
    payload: {
      visitId: s.visitId,
      colonyLabel: label,
      outcome: label === "H2" && options.skipH2 ? "skipped" : "treated",
      skipReason: label === "H2" && options.skipH2 === "with reason" ? "aggressive" : null,
      skipNote: null,
      mites: label === "H1" ? 6 : null,
      beesSampled: label === "H1" ? 300 : null,
      notes: null,
      recordedAt: new Date().toISOString(),
    },
  });
  return [
    { key: aKey("safety"), kind: "safety", ...envelope, payload: { runId: s.runId, items: ALL_SAFE } },
    { key: aKey("supers"), kind: "supers", ...envelope, payload: { visitId: s.visitId } },
    ...s.labels.map(tally),
    { key: aKey("finish"), kind: "finish", ...envelope, payload: { visitId: s.visitId, weatherNote: "Dry, 6 °C", notes: null } },
  ];
}

function sync(changes: unknown[], c: TestCrew = crew, userId = c.members[0].id) {
  return applySyncBatch(db, { crewId: c.id, userId, changes });
}

function statuses(outcomes: SyncOutcome[]) {
  return outcomes.map((o) => o.status);
}

describe("a phone's sync batch", () => {
  it("applies a whole stop in order, and a replay answers duplicates with the first results and changes nothing", async () => {
    const queue = phoneQueue(stop, { skipH2: "with reason" });
    const first = await sync(queue);
    expect(statuses(first)).toEqual(["applied", "applied", "applied", "applied", "applied", "applied"]);
    expect(first.map((o) => o.key)).toEqual(queue.map((c) => c.key));
    const finish = first[5].result as { treated: number; skipped: number; invoiceId: number; nextVisitDate: string };
    expect(finish).toMatchObject({ treated: 2, skipped: 1, nextVisitDate: addCalendarDays(DAY, 7) });
    expect(await db("tallies").where({ visit_id: stop.visitId })).toHaveLength(3);
    expect((await db("visits").where({ id: stop.visitId }).first())?.status).toBe("done");

    const before = await rowCounts(db);
    const replay = await sync(queue);
    expect(statuses(replay)).toEqual(["duplicate", "duplicate", "duplicate", "duplicate", "duplicate", "duplicate"]);
    replay.forEach((o, i) => expect(o.result).toEqual(first[i].result));
    // The other crew member's phone sends the same queue again, in another order: still nothing new.
    const shuffled = await sync([...queue].reverse(), crew, crew.members[1].id);
    expect(statuses(shuffled).every((s) => s === "duplicate")).toBe(true);
    expect(await rowCounts(db)).toEqual(before);
    expect(await db("invoices")).toHaveLength(1);
    expect(await db("email_log").where({ kind: "visit_report" })).toHaveLength(1);
  });

  it("answers conflict for a visit the dispatcher moved meanwhile, saying what changed, and applies nothing for it", async () => {
    const moveTo = addCalendarDays(DAY, 2);
    await rescheduleVisit(db, { visitId: stop.visitId, toDate: moveTo, reason: "Rain", actorUserId: dispatcher });
    const outcomes = await sync(phoneQueue(stop));
    expect(outcomes[0].status).toBe("applied"); // the run's safety check is still the crew's
    for (const outcome of outcomes.slice(1)) {
      expect(outcome.status).toBe("conflict");
      expect(outcome.message).toBe(`The dispatcher moved this visit to ${moveTo}; it is no longer on your run.`);
    }
    expect(await db("tallies")).toHaveLength(0);
    expect(await db("invoices")).toHaveLength(0);
    expect((await db("visits").where({ id: stop.visitId }).first())).toMatchObject({ status: "scheduled", supers_confirmed_at: null });
  });

  it("answers conflict for a visit cancelled meanwhile, or moved to another crew's run", async () => {
    const second = await aStop(db, crew, { date: DAY, colonies: 2 });
    await cancelVisit(db, { visitId: stop.visitId, reason: "Customer sold the hives", actorUserId: dispatcher });
    const [theirs] = await Promise.all([aStop(db, other, { date: DAY, colonies: 1 })]);
    await db("stops").where({ visit_id: second.visitId }).update({ run_id: theirs.runId });
    const cancelled = await sync(phoneQueue(stop).slice(1, 2));
    expect(cancelled[0]).toMatchObject({ status: "conflict", message: "The dispatcher cancelled this visit; nothing was recorded for it." });
    const moved = await sync(phoneQueue(second).slice(1, 2));
    expect(moved[0]).toMatchObject({ status: "conflict", message: "The dispatcher moved this stop to another crew's run." });
  });

  it("refuses an invalid change on its own and goes on with the rest", async () => {
    const queue = phoneQueue(stop, { skipH2: "without reason" });
    const outcomes = await sync(queue);
    expect(statuses(outcomes)).toEqual(["applied", "applied", "applied", "refused", "applied", "refused"]);
    expect(outcomes[3]).toMatchObject({ code: "invalid", message: "Choose why the colony was skipped.", fieldErrors: { "payload.skipReason": "Choose why the colony was skipped." } });
    expect(outcomes[5]).toMatchObject({ code: "invalid", message: expect.stringMatching(/H2 is still open/) });
    // The phone fixes the tally with a new key, then finishes with the same finish key.
    const fixed = { ...queue[3], key: aKey("tally"), payload: { ...queue[3].payload, skipReason: "aggressive" } };
    expect(statuses(await sync([fixed, queue[5]]))).toEqual(["applied", "applied"]);
    expect((await db("visits").where({ id: stop.visitId }).first())?.status).toBe("done");
  });

  it("answers conflict for a tally that arrives after another phone finished the visit", async () => {
    const queue = phoneQueue(stop);
    await sync(queue);
    const late = { ...queue[2], key: aKey("tally"), payload: { ...queue[2].payload, outcome: "skipped", skipReason: "queenless", recordedAt: new Date().toISOString() } };
    const [outcome] = await sync([late]);
    expect(outcome).toMatchObject({ status: "conflict", code: "visit_finished" });
    expect((await db("tallies").where({ visit_id: stop.visitId, colony_label: "H1" }).first())?.outcome).toBe("treated");
  });

  it("refuses unreadable changes, a key another crew used, and a sender who is not on the crew", async () => {
    const queue = phoneQueue(stop);
    await sync(queue.slice(0, 2));
    const theirs = await aStop(db, other, { date: DAY, colonies: 1 });
    const reused = { ...phoneQueue(theirs)[1], key: queue[1].key };
    const outcomes = await sync([{ key: "x", kind: "tally", payload: {} }, { kind: "nonsense" }, reused], other);
    expect(outcomes.map((o) => [o.key, o.status])).toEqual([
      ["x", "refused"],
      ["#1", "refused"],
      [queue[1].key, "refused"],
    ]);
    expect(outcomes[2].message).toMatch(/change key was used/);
    const stranger = await sync(queue.slice(2, 3), crew, other.members[0].id);
    expect(stranger[0]).toMatchObject({ status: "refused", code: "not_your_run" });
    expect(syncBatchSchema.safeParse({ changes: Array.from({ length: 501 }, () => ({})) }).success).toBe(false);
  });
});
