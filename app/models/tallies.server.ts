import type { Knex } from "knex";
import { formatClock } from "~/components/format";
import { addCalendarDays } from "~/domain/courses";
import { BOX_TYPE_LABELS, doseAssumption, doseGramsForColonyOfType, MIN_BROOD_BOXES, type BoxType } from "~/domain/box-types";
import { gramsAtDosePerColony } from "~/domain/yard-colony-doses";
import { doseGramsForSeason } from "~/domain/dose";
import { assessMiteLoad, mitesPer100Bees, washSampleBees, type MiteLoadAssessment } from "~/domain/mites";
import { doseRatesAboveLabel, registrationNumberShown, type BusinessSettings } from "~/domain/settings";
import { airTemperatureWarning, applicationCapProblem } from "~/domain/treatment-guards";
import { roundTo } from "~/domain/units";
import { visitReportEmail, type ReportColony, type ReportSkipReason } from "~/emails/visit-report";
import { fieldErrors, type FieldErrors } from "~/forms/field-errors";
import {
  airTempPayloadSchema,
  changeKeySchema,
  finishPayloadSchema,
  idSchema,
  safetyItemsSchema,
  SYNC_KINDS,
  syncChangeSchema,
  tallyPayloadSchema,
  type SafetyItemsInput,
  type SyncChange,
  type SyncKind,
} from "~/forms/sync";
import { dateInZone } from "~/services/clock.server";
import { serverEnv } from "~/services/env.server";
import { requestEmailDelivery } from "~/services/jobs.server";
import { applicatorsWhenFinished } from "./application-records.server";
import { lockDayForColonies, yardDosesPerColony } from "./capacity.server";
import { treatedBeforeVisits, treatedThisSeason } from "./season-applications.server";
import { queueEmail } from "./emails.server";
import { requestInvoiceEmail } from "./invoice-mail.server";
import { createInvoiceForVisit } from "./invoices-create.server";
import { loadBusinessSettings } from "./settings.server";
import type { SkipReason, TallyRow } from "./tables";

// The crew at a stop: the run's safety check, honey supers confirmed off, one tally per
// colony, and finishing the visit (totals, application record, next round, invoice, report
// e-mail) — and the same four changes sent in batches from a phone that was offline.
//
// Access: every function checks that the visit is a stop on a published (in progress or
// done) run of the signed-in user's crew, and that the user is on that crew; anything else
// is refused with code "not_your_run", which callers answer as 404 (not found).
//
// Idempotency: each change carries a key made on the phone. The change and its key
// (applied_changes) are written in one transaction after the visit's row is locked, so a key
// sent twice — by a retry, a replayed offline queue, or two requests at once — changes
// things once and is answered with the first result. Finishing is idempotent twice over:
// by its key (visits.finish_key) and by state (a finished visit is never finished again).
//
// Lock order, as in visit-changes.server.ts: the visit, then its run, then the service day
// of a next round, then the invoice sequence. A deadlock with the dispatcher's planning
// (which locks runs before visits) is retried.

/** Run statuses on which a crew works its stops. */
export const WORKABLE_RUN_STATUSES = ["published", "in_progress", "done"] as const;

export type TallyRefusalCode = "not_your_run" | "safety_not_checked" | "supers_not_confirmed" | "visit_finished" | "invalid";

/** A crew's change that cannot be made, with a plain message for the crew. */
export class TallyRefused extends Error {
  constructor(
    readonly code: TallyRefusalCode,
    message: string,
    readonly fieldErrors: FieldErrors = {},
  ) {
    super(message);
    this.name = "TallyRefused";
  }

  /** The HTTP status a route answers with: 404 for "not your run" (it looks like not found). */
  get httpStatus(): 404 | 409 | 422 {
    return this.code === "not_your_run" ? 404 : this.code === "visit_finished" ? 409 : 422;
  }
}

const MESSAGES = {
  notYourRun: "There is no such stop on your run.",
  safety: "Tick the safety check for the run first: respirator, eye protection, acid-resistant gloves and the vaporizer ready.",
  supers: "Confirm that the honey supers are off before recording a treatment. A colony with a super on can be skipped with the reason “supers on”.",
  finished: "This visit is finished; its tallies can no longer change.",
  keyReused: "That change key was used for another change. The phone must make a new key for each change.",
} as const;

/** Why a colony cannot be tallied "treated": its dose would be 0 g. */
function zeroDoseMessage(label: string): string {
  return `${label} has no brood box on record, so its dose would be 0 g: it cannot be recorded as treated. Record it as skipped (a dead-out, say), or ask the office to correct its brood boxes.`;
}

function notYourRun(): TallyRefused {
  return new TallyRefused("not_your_run", MESSAGES.notYourRun);
}

function toId(value: unknown): number | null {
  const parsed = idSchema.safeParse(value);
  return parsed.success ? parsed.data : null;
}

/** Instants from a phone are never in the future; a phone whose clock runs ahead gets "now". */
function notLaterThanNow(at: Date | string | null | undefined, now: Date): Date {
  if (at === null || at === undefined) return now;
  const date = at instanceof Date ? at : new Date(at);
  if (Number.isNaN(date.getTime()) || date.getTime() > now.getTime()) return now;
  return date;
}

function iso(value: Date | string | null | undefined): string | null {
  if (value === null || value === undefined) return null;
  return (value instanceof Date ? value : new Date(value)).toISOString();
}

function firstMessage(errors: FieldErrors, fallback: string): string {
  return Object.values(errors).find(Boolean) ?? fallback;
}

function isPgError(error: unknown, codes: string[]): boolean {
  return typeof error === "object" && error !== null && codes.includes(String((error as { code?: unknown }).code));
}

/**
 * Runs `work` in a transaction: a savepoint inside the caller's transaction, or a new
 * transaction retried (up to 3 tries) after a deadlock or a lost race on a unique key — the
 * retry then finds the other request's change and answers as a duplicate.
 */
async function inTransaction<T>(db: Knex, work: (trx: Knex.Transaction) => Promise<T>): Promise<T> {
  if (db.isTransaction) return db.transaction(work);
  for (let attempt = 1; ; attempt++) {
    try {
      return await db.transaction(work);
    } catch (error) {
      if (attempt >= 3 || !isPgError(error, ["40P01", "40001", "23505"])) throw error;
    }
  }
}

/**
 * Awaits queries one after another, in order: a transaction's connection runs one query at a
 * time (and pg deprecates queueing them). Knex query builders start only when awaited.
 */
async function oneByOne<const T extends readonly unknown[]>(items: T): Promise<{ -readonly [K in keyof T]: Awaited<T[K]> }> {
  const out: unknown[] = [];
  for (const item of items) out.push(await item);
  return out as { -readonly [K in keyof T]: Awaited<T[K]> };
}

// ---------------------------------------------------------------------------------------
// Access and applied keys

type StopAccess = {
  visitId: number;
  visitStatus: "scheduled" | "deferred" | "in_progress" | "done" | "cancelled";
  serviceDate: string;
  courseId: number;
  yardId: number;
  roundNumber: number;
  timePreference: "any" | "morning" | "afternoon";
  supersConfirmedAt: Date | null;
  startedAt: Date | null;
  finishKey: string | null;
  runId: number;
  runStatus: string;
  runVersion: number;
  runDate: string;
  safetyCheckedAt: Date | null;
  crewId: number;
};

async function assertCrewMember(db: Knex, crewId: number, userId: unknown): Promise<number> {
  const uid = toId(userId);
  if (uid === null) throw notYourRun();
  const member = await db("crew_members").where({ crew_id: crewId, user_id: uid }).first("user_id");
  if (!member) throw notYourRun();
  return uid;
}

/**
 * The visit as a stop of one of the crew's workable runs, or "not your run". With `lock`, the
 * visit's row stays locked for the rest of the transaction.
 */
async function stopAccess(db: Knex, visitId: unknown, crewId: unknown, lock: boolean): Promise<StopAccess> {
  const vid = toId(visitId);
  const cid = toId(crewId);
  if (vid === null || cid === null) throw notYourRun();
  const visitQuery = db("visits").where({ id: vid });
  if (lock) visitQuery.forUpdate();
  const visit = await visitQuery.first(
    "id",
    "status",
    "service_date",
    "course_id",
    "yard_id",
    "round_number",
    "time_preference",
    "supers_confirmed_at",
    "started_at",
    "finish_key",
  );
  if (!visit) throw notYourRun();
  const run = await db("stops")
    .join("runs", "runs.id", "stops.run_id")
    .where("stops.visit_id", vid)
    .first("runs.id", "runs.crew_id", "runs.status", "runs.version", "runs.service_date", "runs.safety_checked_at");
  if (!run || Number(run.crew_id) !== cid || !(WORKABLE_RUN_STATUSES as readonly string[]).includes(run.status)) throw notYourRun();
  if (visit.status === "cancelled" || visit.status === "deferred") throw notYourRun();
  return {
    visitId: vid,
    visitStatus: visit.status,
    serviceDate: visit.service_date,
    courseId: Number(visit.course_id),
    yardId: Number(visit.yard_id),
    roundNumber: visit.round_number,
    timePreference: visit.time_preference,
    supersConfirmedAt: visit.supers_confirmed_at,
    startedAt: visit.started_at,
    finishKey: visit.finish_key,
    runId: Number(run.id),
    runStatus: run.status,
    runVersion: run.version,
    runDate: run.service_date,
    safetyCheckedAt: run.safety_checked_at,
    crewId: cid,
  };
}

/** The stored result of a change applied before under `key`, or null. A key reused for another change is refused. */
async function appliedChange(db: Knex, key: string, crewId: number, kind: SyncKind, visitId: number | null): Promise<unknown | null> {
  const row = await db("applied_changes").where({ key }).first("crew_id", "kind", "visit_id", "result");
  if (!row) return null;
  if (Number(row.crew_id) !== crewId || row.kind !== kind || (visitId !== null && row.visit_id !== null && Number(row.visit_id) !== visitId)) {
    throw new TallyRefused("invalid", MESSAGES.keyReused);
  }
  return row.result;
}

async function recordAppliedChange(
  trx: Knex,
  change: { key: string; crewId: number; kind: SyncKind; visitId: number | null; userId: number; result: unknown },
): Promise<void> {
  await trx("applied_changes").insert({
    key: change.key,
    crew_id: change.crewId,
    kind: change.kind,
    visit_id: change.visitId,
    user_id: change.userId,
    result: JSON.stringify(change.result) as unknown,
  });
}

function parseKey(key: unknown): string {
  const parsed = changeKeySchema.safeParse(key);
  if (!parsed.success) throw new TallyRefused("invalid", parsed.error.issues[0]?.message ?? "The change has no valid key.");
  return parsed.data;
}

// ---------------------------------------------------------------------------------------
// Safety check

export type SafetyItems = SafetyItemsInput;

export type SafetyCheckResult = {
  runId: number;
  status: string;
  safetyCheckedAt: string;
  /** True when the run's safety check was ticked before (by anyone on the crew). */
  alreadyChecked: boolean;
  duplicate?: boolean;
};

const SAFETY_ITEM_NAMES: Record<keyof SafetyItems, string> = {
  respirator: "the respirator (acid-gas and particulate filters)",
  eyeProtection: "sealed eye protection",
  gloves: "acid-resistant gloves",
  vaporizerReady: "the vaporizer ready",
};

type SafetyInput = {
  runId: number | string;
  crewId: number | string;
  userId: number | string;
  items: SafetyItems;
  idempotencyKey?: string | null;
  checkedAt?: Date | string | null;
};

async function safetyCheckTx(trx: Knex.Transaction, input: SafetyInput, now: Date): Promise<SafetyCheckResult> {
  const runId = toId(input.runId);
  const crewId = toId(input.crewId);
  if (runId === null || crewId === null) throw notYourRun();
  const userId = await assertCrewMember(trx, crewId, input.userId);
  const run = await trx("runs").where({ id: runId }).forUpdate().first("id", "crew_id", "status", "safety_checked_at");
  if (!run || Number(run.crew_id) !== crewId || !(WORKABLE_RUN_STATUSES as readonly string[]).includes(run.status)) throw notYourRun();
  const key = input.idempotencyKey ? parseKey(input.idempotencyKey) : null;
  if (key) {
    const stored = await appliedChange(trx, key, crewId, "safety", null);
    if (stored) return { ...(stored as SafetyCheckResult), duplicate: true };
  }

  const parsed = safetyItemsSchema.safeParse(input.items);
  if (!parsed.success) throw new TallyRefused("invalid", "Tick every item of the safety check.", fieldErrors(parsed.error));
  const missing = (Object.keys(SAFETY_ITEM_NAMES) as (keyof SafetyItems)[]).filter((item) => parsed.data[item] !== true);
  if (missing.length > 0) {
    throw new TallyRefused(
      "invalid",
      `Tick every item of the safety check before the first stop. Missing: ${missing.map((m) => SAFETY_ITEM_NAMES[m]).join(", ")}.`,
      Object.fromEntries(missing.map((m) => [`items.${m}`, `Tick ${SAFETY_ITEM_NAMES[m]}.`])),
    );
  }

  let result: SafetyCheckResult;
  if (run.safety_checked_at) {
    result = { runId, status: run.status, safetyCheckedAt: iso(run.safety_checked_at)!, alreadyChecked: true };
  } else {
    const at = notLaterThanNow(input.checkedAt, now);
    const status = run.status === "published" ? "in_progress" : run.status;
    await trx("runs").where({ id: runId }).update({ safety_checked_at: at, status, updated_at: trx.fn.now() as unknown as Date });
    await trx("audit_log").insert({
      actor_user_id: userId,
      action: "run.safety_check",
      entity_type: "run",
      entity_id: String(runId),
      before: JSON.stringify({ status: run.status, safetyCheckedAt: null }),
      after: JSON.stringify({ status, safetyCheckedAt: at.toISOString(), items: parsed.data }),
    });
    result = { runId, status, safetyCheckedAt: at.toISOString(), alreadyChecked: false };
  }
  if (key) await recordAppliedChange(trx, { key, crewId, kind: "safety", visitId: null, userId, result });
  return result;
}

/**
 * The crew's safety check before the first stop: all four items must be ticked. Sets the
 * run's safety_checked_at and puts a published run in progress (the dispatcher's planning
 * then leaves it alone). Ticking it again changes nothing.
 */
export async function confirmRunSafetyCheck(db: Knex, input: SafetyInput, now = new Date()): Promise<SafetyCheckResult> {
  return inTransaction(db, (trx) => safetyCheckTx(trx, input, now));
}

// ---------------------------------------------------------------------------------------
// Supers off

export type SupersResult = {
  visitId: number;
  status: string;
  supersConfirmedAt: string;
  supersConfirmedBy: number | null;
  /** True when the supers were confirmed off before (by anyone on the crew). */
  alreadyConfirmed: boolean;
  duplicate?: boolean;
};

type SupersInput = {
  visitId: number | string;
  crewId: number | string;
  userId: number | string;
  idempotencyKey: string;
  confirmedAt?: Date | string | null;
};

async function confirmSupersTx(trx: Knex.Transaction, input: SupersInput, now: Date): Promise<SupersResult> {
  const access = await stopAccess(trx, input.visitId, input.crewId, true);
  const userId = await assertCrewMember(trx, access.crewId, input.userId);
  const key = parseKey(input.idempotencyKey);
  const stored = await appliedChange(trx, key, access.crewId, "supers", access.visitId);
  if (stored) return { ...(stored as SupersResult), duplicate: true };

  const visit = await trx("visits").where({ id: access.visitId }).first("status", "supers_confirmed_at", "supers_confirmed_by");
  let result: SupersResult;
  if (visit!.supers_confirmed_at) {
    result = {
      visitId: access.visitId,
      status: visit!.status,
      supersConfirmedAt: iso(visit!.supers_confirmed_at)!,
      supersConfirmedBy: visit!.supers_confirmed_by,
      alreadyConfirmed: true,
    };
  } else {
    if (access.visitStatus === "done") throw new TallyRefused("visit_finished", MESSAGES.finished);
    if (!access.safetyCheckedAt) throw new TallyRefused("safety_not_checked", MESSAGES.safety);
    const at = notLaterThanNow(input.confirmedAt, now);
    await trx("visits")
      .where({ id: access.visitId })
      .update({
        supers_confirmed_at: at,
        supers_confirmed_by: userId,
        status: "in_progress",
        started_at: trx.raw("coalesce(started_at, ?)", [at]) as unknown as Date,
        updated_at: trx.fn.now() as unknown as Date,
      });
    await trx("audit_log").insert({
      actor_user_id: userId,
      action: "visit.supers_off",
      entity_type: "visit",
      entity_id: String(access.visitId),
      before: JSON.stringify({ status: access.visitStatus, supersConfirmedAt: null }),
      after: JSON.stringify({ status: "in_progress", supersConfirmedAt: at.toISOString() }),
    });
    result = { visitId: access.visitId, status: "in_progress", supersConfirmedAt: at.toISOString(), supersConfirmedBy: userId, alreadyConfirmed: false };
  }
  await recordAppliedChange(trx, { key, crewId: access.crewId, kind: "supers", visitId: access.visitId, userId, result });
  return result;
}

/**
 * The crew confirms the honey supers are off at a stop: treatment may be recorded from now
 * on, and the visit is in progress. Needs the run's safety check. Idempotent by key and by state.
 */
export async function confirmSupersOff(db: Knex, input: SupersInput, now = new Date()): Promise<SupersResult> {
  return inTransaction(db, (trx) => confirmSupersTx(trx, input, now));
}

// ---------------------------------------------------------------------------------------
// Tallies

export type TallyView = {
  id: number;
  visitId: number;
  colonyId: number | null;
  colonyLabel: string;
  outcome: "treated" | "skipped";
  skipReason: SkipReason | null;
  skipNote: string | null;
  broodBoxes: number;
  /** The box type the dose was worked out for. */
  boxType: BoxType;
  /** Whether the crew saw brood in the colony; null when they did not say. */
  broodSeen: boolean | null;
  doseGrams: number;
  mites: number | null;
  /** The bees the wash count is divided by: counted, or estimated from the sample's volume. */
  beesSampled: number | null;
  /** True when beesSampled was estimated from sampleMl (bees per 100 mL in settings), not counted. */
  beesEstimated: boolean;
  /** The wash sample's volume in mL, when the crew gave it. */
  sampleMl: number | null;
  /** Mites per 100 bees (to 0.01) when a wash count was given. */
  mitesPer100: number | null;
  /** The count against the action threshold of the visit's month, when a wash count was given. */
  miteLoad: MiteLoadAssessment | null;
  notes: string | null;
  recordedAt: string;
  recordedBy: number | null;
};

export type TallyResult = TallyView & {
  /** True when this key was applied before: nothing changed, the first result is returned. */
  duplicate?: boolean;
  /** True when a tally recorded later on another phone was kept instead of this one. */
  superseded?: boolean;
};

function miteLoadFor(mites: number | null, bees: number | null, serviceDate: string, settings: BusinessSettings) {
  if (mites === null || bees === null || bees <= 0) return { mitesPer100: null, miteLoad: null };
  try {
    const miteLoad = assessMiteLoad(mites, bees, serviceDate, settings.miteThresholds);
    return { mitesPer100: miteLoad.mitesPer100, miteLoad };
  } catch {
    return { mitesPer100: mitesPer100Bees(mites, bees), miteLoad: null };
  }
}

function tallyView(row: TallyRow, serviceDate: string, settings: BusinessSettings): TallyView {
  return {
    id: Number(row.id),
    visitId: Number(row.visit_id),
    colonyId: row.colony_id === null ? null : Number(row.colony_id),
    colonyLabel: row.colony_label,
    outcome: row.outcome,
    skipReason: row.skip_reason,
    skipNote: row.skip_note,
    broodBoxes: row.brood_boxes,
    boxType: row.box_type,
    broodSeen: row.brood_seen ?? null,
    doseGrams: Number(row.dose_grams),
    mites: row.mites,
    beesSampled: row.bees_sampled,
    beesEstimated: row.bees_estimated === true,
    sampleMl: row.wash_sample_ml === null || row.wash_sample_ml === undefined ? null : Number(row.wash_sample_ml),
    ...miteLoadFor(row.mites, row.bees_sampled, serviceDate, settings),
    notes: row.notes,
    recordedAt: iso(row.recorded_at)!,
    recordedBy: row.recorded_by === null ? null : Number(row.recorded_by),
  };
}

export type TallyInput = {
  visitId: number | string;
  crewId: number | string;
  userId: number | string;
  idempotencyKey: string;
  colonyLabel: string;
  outcome: "treated" | "skipped";
  skipReason?: SkipReason | null;
  skipNote?: string | null;
  mites?: number | string | null;
  beesSampled?: number | string | null;
  /** The wash sample's volume in mL: the bees are estimated from it when they were not counted. */
  sampleMl?: number | string | null;
  notes?: string | null;
  recordedAt: Date | string;
  /** What the crew found at the hive, when it differs from the record: the colony is corrected and dosed from it. */
  broodBoxes?: number | string | null;
  boxType?: BoxType | string | null;
  broodSeen?: boolean | string | null;
};

async function recordTallyTx(trx: Knex.Transaction, input: TallyInput, now: Date): Promise<TallyResult> {
  const access = await stopAccess(trx, input.visitId, input.crewId, true);
  const userId = await assertCrewMember(trx, access.crewId, input.userId);
  const key = parseKey(input.idempotencyKey);
  const stored = await appliedChange(trx, key, access.crewId, "tally", access.visitId);
  if (stored) return { ...(stored as TallyResult), duplicate: true };
  if (access.visitStatus === "done") throw new TallyRefused("visit_finished", MESSAGES.finished);

  const parsed = tallyPayloadSchema.safeParse({
    visitId: access.visitId,
    colonyLabel: input.colonyLabel,
    outcome: input.outcome,
    skipReason: input.skipReason ?? null,
    skipNote: input.skipNote ?? null,
    mites: input.mites ?? null,
    beesSampled: input.beesSampled ?? null,
    sampleMl: input.sampleMl ?? null,
    notes: input.notes ?? null,
    recordedAt: input.recordedAt,
    broodBoxes: input.broodBoxes ?? null,
    boxType: input.boxType ?? null,
    broodSeen: input.broodSeen ?? null,
  });
  if (!parsed.success) {
    const errors = fieldErrors(parsed.error);
    throw new TallyRefused("invalid", firstMessage(errors, "Check the tally."), errors);
  }
  const tally = parsed.data;
  if (tally.outcome === "treated" && !access.supersConfirmedAt) throw new TallyRefused("supers_not_confirmed", MESSAGES.supers);

  const colony = await trx("colonies")
    .where({ yard_id: access.yardId, label: tally.colonyLabel, active: true })
    .forUpdate()
    .first("id", "label", "brood_boxes", "box_type", "brood_status");
  if (!colony) {
    throw new TallyRefused("invalid", `There is no colony “${tally.colonyLabel}” at this yard.`, { colonyLabel: "Choose a colony of this yard." });
  }
  // What the crew found at the hive wins over the record: the dose is worked out from it.
  const broodBoxes = tally.broodBoxes ?? colony.brood_boxes;
  const boxType = tally.boxType ?? colony.box_type;
  const broodStatus = tally.broodSeen === null ? colony.brood_status : tally.broodSeen ? "brood" : "broodless";
  const settings = await loadBusinessSettings(trx);
  if (tally.outcome === "treated" && !(broodBoxes >= MIN_BROOD_BOXES)) {
    // Only a colony left with 0 brood boxes (from before the database's check) gets here; a
    // "treated" tally of 0 g would be a false record, and the dose functions refuse it.
    throw new TallyRefused("invalid", zeroDoseMessage(colony.label), { outcome: zeroDoseMessage(colony.label) });
  }
  const doseGrams = tally.outcome === "treated" ? doseGramsForColonyOfType(broodBoxes, boxType, settings) : 0;
  const wash = tally.mites === null ? null : washSampleBees({ beesCounted: tally.beesSampled, sampleMl: tally.sampleMl }, settings.beesPer100Ml);
  const recordedAt = notLaterThanNow(tally.recordedAt, now);

  const existing = await trx("tallies").where({ visit_id: access.visitId, colony_label: colony.label }).forUpdate().first();
  let result: TallyResult;
  if (existing && new Date(existing.recorded_at).getTime() > recordedAt.getTime()) {
    // Two phones, one colony: the tally recorded last wins, whichever arrives last.
    result = { ...tallyView(existing, access.serviceDate, settings), superseded: true };
  } else {
    if (tally.outcome === "treated") {
      // Counted after the tally row's lock, so two phones treating one colony are counted in turn.
      const already = await treatedThisSeason(trx, { yardId: access.yardId, colonyId: Number(colony.id), serviceDate: access.serviceDate, exceptVisitId: access.visitId });
      const problem = applicationCapProblem(colony.label, already, settings.maxApplicationsPerColonyPerSeason);
      if (problem) throw new TallyRefused("invalid", problem, { outcome: problem });
    }
    const values = {
      visit_id: access.visitId,
      colony_id: Number(colony.id),
      colony_label: colony.label,
      outcome: tally.outcome,
      skip_reason: tally.skipReason,
      skip_note: tally.skipNote,
      brood_boxes: broodBoxes,
      box_type: boxType,
      brood_seen: tally.broodSeen,
      dose_grams: doseGrams,
      mites: tally.mites,
      bees_sampled: wash?.beesSampled ?? null,
      wash_sample_ml: wash?.sampleMl ?? null,
      bees_estimated: wash?.beesEstimated ?? false,
      notes: tally.notes,
      recorded_by: userId,
      recorded_at: recordedAt,
      idempotency_key: key,
    };
    const [row] = await trx("tallies")
      .insert(values)
      .onConflict(["visit_id", "colony_label"])
      .merge({ ...values, updated_at: trx.fn.now() as unknown as Date })
      .returning("*");
    const corrected = broodBoxes !== colony.brood_boxes || boxType !== colony.box_type || broodStatus !== colony.brood_status;
    if (corrected) {
      await trx("colonies")
        .where({ id: colony.id })
        .update({ brood_boxes: broodBoxes, box_type: boxType, brood_status: broodStatus, updated_at: trx.fn.now() as unknown as Date });
      await trx("audit_log").insert({
        actor_user_id: userId,
        action: "colony.correct",
        entity_type: "colony",
        entity_id: String(colony.id),
        before: JSON.stringify({ colonyLabel: colony.label, broodBoxes: colony.brood_boxes, boxType: colony.box_type, broodStatus: colony.brood_status }),
        after: JSON.stringify({ colonyLabel: colony.label, broodBoxes, boxType, broodStatus, visitId: access.visitId, key }),
      });
    }
    if (access.visitStatus === "scheduled" || !access.startedAt) {
      await trx("visits")
        .where({ id: access.visitId })
        .update({
          status: "in_progress",
          started_at: trx.raw("coalesce(started_at, ?)", [recordedAt]) as unknown as Date,
          updated_at: trx.fn.now() as unknown as Date,
        });
    }
    await trx("audit_log").insert({
      actor_user_id: userId,
      action: existing ? "tally.change" : "tally.record",
      entity_type: "visit",
      entity_id: String(access.visitId),
      before: existing ? JSON.stringify({ colonyLabel: existing.colony_label, outcome: existing.outcome, skipReason: existing.skip_reason, mites: existing.mites, beesSampled: existing.bees_sampled }) : null,
      after: JSON.stringify({
        colonyLabel: colony.label,
        outcome: tally.outcome,
        skipReason: tally.skipReason,
        doseGrams,
        broodBoxes,
        boxType,
        ...(tally.broodSeen !== null ? { broodSeen: tally.broodSeen } : {}),
        mites: tally.mites,
        beesSampled: wash?.beesSampled ?? null,
        ...(wash?.beesEstimated ? { beesEstimated: true, sampleMl: wash.sampleMl } : {}),
        key,
      }),
    });
    result = tallyView(row as TallyRow, access.serviceDate, settings);
  }
  await recordAppliedChange(trx, { key, crewId: access.crewId, kind: "tally", visitId: access.visitId, userId, result });
  return result;
}

/**
 * Records (or replaces) one colony's tally at a visit. Treatment needs the supers confirmed
 * off; a skipped colony needs a reason. The dose comes from the colony's brood boxes and the
 * dose rate in settings for its box type — as the crew corrected them at the hive, when they
 * did (the colony's record is corrected in the same transaction, and audited); a colony treated the season's most times is refused. The same key twice changes nothing and returns the first result;
 * after the visit is finished, a new key is refused.
 */
export async function recordTally(db: Knex, input: TallyInput, now = new Date()): Promise<TallyResult> {
  return inTransaction(db, (trx) => recordTallyTx(trx, input, now));
}

// ---------------------------------------------------------------------------------------
// Air temperature at the yard

export type AirTempResult = {
  visitId: number;
  airTempC: number;
  /** The business's band warning when the temperature lies outside it (never a refusal). */
  warning: string | null;
  duplicate?: boolean;
};

type AirTempInput = { visitId: number | string; crewId: number | string; userId: number | string; idempotencyKey: string; airTempC: number | string };

async function recordAirTemperatureTx(trx: Knex.Transaction, input: AirTempInput): Promise<AirTempResult> {
  const access = await stopAccess(trx, input.visitId, input.crewId, true);
  const userId = await assertCrewMember(trx, access.crewId, input.userId);
  const key = parseKey(input.idempotencyKey);
  const stored = await appliedChange(trx, key, access.crewId, "air_temp", access.visitId);
  if (stored) return { ...(stored as AirTempResult), duplicate: true };
  if (access.visitStatus === "done") throw new TallyRefused("visit_finished", MESSAGES.finished);
  const parsed = airTempPayloadSchema.safeParse({ visitId: access.visitId, airTempC: input.airTempC });
  if (!parsed.success) {
    const errors = fieldErrors(parsed.error);
    throw new TallyRefused("invalid", firstMessage(errors, "Check the air temperature."), errors);
  }
  const airTempC = parsed.data.airTempC;
  const settings = await loadBusinessSettings(trx);
  const before = await trx("visits").where({ id: access.visitId }).first("air_temp_c");
  await trx("visits").where({ id: access.visitId }).update({ air_temp_c: String(airTempC), updated_at: trx.fn.now() as unknown as Date });
  const warning = airTemperatureWarning(airTempC, settings, settings.unitSystem);
  await trx("audit_log").insert({
    actor_user_id: userId,
    action: "visit.air_temp",
    entity_type: "visit",
    entity_id: String(access.visitId),
    before: before?.air_temp_c === null || before?.air_temp_c === undefined ? null : JSON.stringify({ airTempC: Number(before.air_temp_c) }),
    after: JSON.stringify({ airTempC, warning, key }),
  });
  const result: AirTempResult = { visitId: access.visitId, airTempC, warning };
  await recordAppliedChange(trx, { key, crewId: access.crewId, kind: "air_temp", visitId: access.visitId, userId, result });
  return result;
}

/**
 * Records the air temperature (°C) the crew read at the yard. Outside the business's band
 * the answer carries a warning; the temperature is recorded regardless. The same key twice
 * changes nothing and returns the first result.
 */
export async function recordAirTemperature(db: Knex, input: AirTempInput): Promise<AirTempResult> {
  return inTransaction(db, (trx) => recordAirTemperatureTx(trx, input));
}

// ---------------------------------------------------------------------------------------
// Application record and visit report

export type ApplicationRecord = {
  visitId: number;
  serviceDate: string;
  /** Instants (ISO) and clock times in the business's time zone. */
  startedAt: string | null;
  finishedAt: string | null;
  startTime: string | null;
  finishTime: string | null;
  timeZone: string;
  customerName: string;
  customerAddress: string;
  yardName: string;
  yardAddress: string | null;
  lat: number;
  lng: number;
  site: string;
  coloniesTreated: number;
  productName: string;
  productRegistrationNumber: string;
  doseGramsPerBroodBox: number;
  gramsApplied: number;
  applicatorName: string | null;
  applicatorLicence: string | null;
  weatherNote: string | null;
  /** The air temperature the crew read at the yard, °C, when they gave it. */
  airTempC: number | null;
};

/** What an application record calls the site treated. */
export const APPLICATION_SITE = "Honey bee colonies (beehives), by vapor through the entrance";

function joinAddress(parts: (string | null | undefined)[]): string {
  return parts
    .map((p) => p?.trim())
    .filter(Boolean)
    .join(", ");
}

/** The application record of a finished visit, from the visit, its tallies and settings. */
export async function applicationRecordForVisit(db: Knex, visitId: number, settings?: BusinessSettings): Promise<ApplicationRecord | null> {
  const s = settings ?? (await loadBusinessSettings(db));
  const row = await db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .leftJoin("users", "users.id", "visits.finished_by")
    .where("visits.id", visitId)
    .first(
      "visits.id",
      "visits.service_date",
      "visits.started_at",
      "visits.supers_confirmed_at",
      "visits.finished_at",
      "visits.weather_note",
      "visits.air_temp_c",
      "customers.name as customer_name",
      "customers.address_line",
      "customers.city",
      "customers.region",
      "customers.postal_code",
      "yards.name as yard_name",
      "yards.address as yard_address",
      "yards.lat",
      "yards.lng",
      "visits.product_name",
      "visits.product_registration_number",
      "visits.applicator_name as kept_applicator_name",
      "visits.applicator_licence as kept_applicator_licence",
      "users.name as applicator_name",
      "users.applicator_licence",
    );
  if (!row) return null;
  const treated = await db("tallies").where({ visit_id: visitId, outcome: "treated" }).select("dose_grams");
  const started = row.started_at ?? row.supers_confirmed_at;
  // A finished visit keeps its applicator's name (never null on an account), so null means not kept.
  const kept = row.kept_applicator_name !== null && row.kept_applicator_name !== undefined;
  return {
    visitId: Number(row.id),
    serviceDate: row.service_date,
    startedAt: iso(started),
    finishedAt: iso(row.finished_at),
    startTime: started ? formatClock(started, s.timeZone) : null,
    finishTime: row.finished_at ? formatClock(row.finished_at, s.timeZone) : null,
    timeZone: s.timeZone,
    customerName: row.customer_name,
    customerAddress: joinAddress([row.address_line, row.city, row.region, row.postal_code]),
    yardName: row.yard_name,
    yardAddress: row.yard_address,
    lat: Number(row.lat),
    lng: Number(row.lng),
    site: APPLICATION_SITE,
    coloniesTreated: treated.length,
    // As kept on the visit when it was finished; settings and the account as they are now
    // only for a visit finished before those were kept.
    productName: row.product_name ?? s.productName,
    productRegistrationNumber: registrationNumberShown(row.product_registration_number ?? s.productRegistrationNumber),
    doseGramsPerBroodBox: s.doseGramsPerBroodBox,
    gramsApplied: doseGramsForSeason(treated.map((t) => Number(t.dose_grams))),
    applicatorName: kept ? row.kept_applicator_name : (row.applicator_name ?? null),
    applicatorLicence: kept ? (row.kept_applicator_licence ?? null) : (row.applicator_licence ?? null),
    weatherNote: row.weather_note,
    airTempC: row.air_temp_c === null || row.air_temp_c === undefined ? null : Number(row.air_temp_c),
  };
}

export type VisitReport = {
  visitId: number;
  serviceDate: string;
  status: string;
  yardId: number;
  yardName: string;
  customerId: number;
  customerName: string;
  customerEmail: string;
  roundNumber: number;
  roundsPlanned: number;
  finishedAt: string | null;
  treated: number;
  skipped: number;
  grams: number;
  productName: string;
  productRegistrationNumber: string;
  colonies: ReportColony[];
  nextRound: { visitId: number; date: string; status: string; deferred: boolean } | null;
  courseComplete: boolean;
  /** Rounds added to the course because the crew found brood at this visit (0 when none). */
  roundsAdded: number;
  weatherNote: string | null;
};

function byLabel(a: { colony_label: string }, b: { colony_label: string }): number {
  return a.colony_label.length - b.colony_label.length || a.colony_label.localeCompare(b.colony_label);
}

async function loadVisitReport(db: Knex, visitId: number, settings: BusinessSettings): Promise<VisitReport | null> {
  const visit = await db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("customers", "customers.id", "yards.customer_id")
    .join("courses", "courses.id", "visits.course_id")
    .where("visits.id", visitId)
    .first(
      "visits.id",
      "visits.service_date",
      "visits.status",
      "visits.round_number",
      "visits.course_id",
      "visits.finished_at",
      "visits.weather_note",
      "visits.product_name",
      "visits.product_registration_number",
      "courses.rounds_planned",
      "courses.status as course_status",
      "yards.id as yard_id",
      "yards.name as yard_name",
      "customers.id as customer_id",
      "customers.name as customer_name",
      "customers.email as customer_email",
    );
  if (!visit) return null;
  const [tallies, next, roundsAdded] = await oneByOne([
    db("tallies").where({ visit_id: visitId }).select("*"),
    db("visits").where({ course_id: visit.course_id, round_number: visit.round_number + 1 }).whereNot({ status: "cancelled" }).first("id", "service_date", "status"),
    roundsAddedAtVisit(db, visitId, Number(visit.course_id)),
  ]);
  const colonies: ReportColony[] = [...tallies].sort(byLabel).map((t) => {
    const load = miteLoadFor(t.mites, t.bees_sampled, visit.service_date, settings);
    return {
      label: t.colony_label,
      outcome: t.outcome,
      skipReason: t.skip_reason as ReportSkipReason | null,
      skipNote: t.skip_note,
      doseGrams: Number(t.dose_grams),
      mites: t.mites,
      beesSampled: t.bees_sampled,
      beesEstimated: t.bees_estimated === true,
      sampleMl: t.wash_sample_ml === null || t.wash_sample_ml === undefined ? null : Number(t.wash_sample_ml),
      mitesPer100: load.mitesPer100,
      threshold: load.miteLoad?.threshold ?? null,
      level: load.miteLoad?.level ?? null,
    };
  });
  const treated = colonies.filter((c) => c.outcome === "treated");
  return {
    visitId: Number(visit.id),
    serviceDate: visit.service_date,
    status: visit.status,
    yardId: Number(visit.yard_id),
    yardName: visit.yard_name,
    customerId: Number(visit.customer_id),
    customerName: visit.customer_name,
    customerEmail: visit.customer_email,
    roundNumber: visit.round_number,
    roundsPlanned: visit.rounds_planned,
    finishedAt: iso(visit.finished_at),
    treated: treated.length,
    skipped: colonies.length - treated.length,
    grams: doseGramsForSeason(treated.map((c) => c.doseGrams)),
    // The product kept on the visit when it was finished; settings only for visits not finished yet.
    productName: visit.product_name ?? settings.productName,
    productRegistrationNumber: registrationNumberShown(visit.product_registration_number ?? settings.productRegistrationNumber),
    colonies,
    nextRound: next ? { visitId: Number(next.id), date: next.service_date, status: next.status, deferred: next.status === "deferred" } : null,
    courseComplete: visit.course_status === "complete",
    roundsAdded,
    weatherNote: visit.weather_note,
  };
}

/** The report of a finished visit for the customer's portal; null when the visit is not theirs or not finished. */
export async function visitReportForCustomer(db: Knex, input: { visitId: number | string; customerId: number | string }): Promise<VisitReport | null> {
  const visitId = toId(input.visitId);
  const customerId = toId(input.customerId);
  if (visitId === null || customerId === null) return null;
  const owned = await db("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .where("visits.id", visitId)
    .where("yards.customer_id", customerId)
    .where("visits.status", "done")
    .first("visits.id");
  if (!owned) return null;
  return loadVisitReport(db, visitId, await loadBusinessSettings(db));
}

/** Where the customer reads a visit report in the portal. */
export function visitReportUrl(visitId: number): string {
  return `${serverEnv().APP_URL}/portal/visits/${visitId}`;
}

// ---------------------------------------------------------------------------------------
// Finishing a visit

export type FinishResult = {
  visitId: number;
  /** True when the visit was finished before (by this key or another): nothing was created now. */
  alreadyFinished: boolean;
  treated: number;
  skipped: number;
  grams: number;
  invoiceId: number | null;
  invoiceNumber: string | null;
  nextVisitId: number | null;
  nextVisitDate: string | null;
  nextVisitStatus: "scheduled" | "deferred" | null;
  nextVisitDeferReason: string | null;
  courseComplete: boolean;
  /** Rounds added to a course planned broodless because the crew found brood at this visit (0 when none). */
  roundsAdded: number;
  runDone: boolean;
  applicationRecord: ApplicationRecord | null;
};

type FinishInput = {
  visitId: number | string;
  crewId: number | string;
  userId: number | string;
  finishKey: string;
  weatherNote?: string | null;
  notes?: string | null;
  finishedAt?: Date | string | null;
};

/** The result of a visit finished before, rebuilt from what it left behind. */
async function finishedResult(trx: Knex, visitId: number, settings: BusinessSettings): Promise<FinishResult> {
  const [report, invoice, stop] = await oneByOne([
    loadVisitReport(trx, visitId, settings),
    trx("invoices").where({ visit_id: visitId }).whereNot({ status: "void" }).first("id", "number"),
    trx("stops").join("runs", "runs.id", "stops.run_id").where("stops.visit_id", visitId).first("runs.status"),
  ]);
  const next = report?.nextRound ? await trx("visits").where({ id: report.nextRound.visitId }).first("defer_reason") : null;
  return {
    visitId,
    alreadyFinished: true,
    treated: report?.treated ?? 0,
    skipped: report?.skipped ?? 0,
    grams: report?.grams ?? 0,
    invoiceId: invoice ? Number(invoice.id) : null,
    invoiceNumber: invoice?.number ?? null,
    nextVisitId: report?.nextRound?.visitId ?? null,
    nextVisitDate: report?.nextRound?.date ?? null,
    nextVisitStatus: report?.nextRound ? (report.nextRound.deferred ? "deferred" : "scheduled") : null,
    nextVisitDeferReason: next?.defer_reason ?? null,
    courseComplete: report?.courseComplete ?? false,
    roundsAdded: report?.roundsAdded ?? 0,
    runDone: stop?.status === "done",
    applicationRecord: await applicationRecordForVisit(trx, visitId, settings),
  };
}

/**
 * Brood found in a course planned broodless (one round): the course gets the rounds of a
 * course with brood (settings), the yard is on record with brood, and the next round is then
 * scheduled as for any course. Returns the rounds added (0 when nothing changed).
 */
async function addRoundsForBroodFound(trx: Knex.Transaction, access: StopAccess, settings: BusinessSettings, userId: number): Promise<number> {
  const course = await trx("courses").where({ id: access.courseId }).forUpdate().first("id", "rounds_planned", "interval_days", "brood_status", "status");
  if (!course || course.status === "cancelled" || course.rounds_planned !== 1 || settings.roundsWithBrood <= 1) return 0;
  const broodSeen = await trx("tallies").where({ visit_id: access.visitId, brood_seen: true }).first("id");
  if (!broodSeen) return 0;
  const roundsAdded = settings.roundsWithBrood - course.rounds_planned;
  await trx("courses").where({ id: course.id }).update({
    rounds_planned: settings.roundsWithBrood,
    interval_days: settings.roundIntervalDays,
    brood_status: "brood",
    updated_at: trx.fn.now() as unknown as Date,
  });
  const yard = await trx("yards").where({ id: access.yardId }).forUpdate().first("brood_status");
  if (yard && yard.brood_status !== "brood") {
    await trx("yards").where({ id: access.yardId }).update({ brood_status: "brood", updated_at: trx.fn.now() as unknown as Date });
  }
  await trx("audit_log").insert({
    actor_user_id: userId,
    action: "course.rounds_added",
    entity_type: "course",
    entity_id: String(course.id),
    before: JSON.stringify({ roundsPlanned: course.rounds_planned, intervalDays: course.interval_days, broodStatus: course.brood_status, yardBroodStatus: yard?.brood_status ?? null }),
    after: JSON.stringify({ roundsPlanned: settings.roundsWithBrood, intervalDays: settings.roundIntervalDays, broodStatus: "brood", yardBroodStatus: "brood", roundsAdded, visitId: access.visitId }),
  });
  return roundsAdded;
}

/** Rounds added to the course when this visit found brood (its "course.rounds_added" audit row), or 0. */
async function roundsAddedAtVisit(db: Knex, visitId: number, courseId: number): Promise<number> {
  const row = await db("audit_log")
    .where({ action: "course.rounds_added", entity_type: "course", entity_id: String(courseId) })
    .whereRaw("after->>'visitId' = ?", [String(visitId)])
    .first("after");
  return row ? Number((row.after as { roundsAdded?: number }).roundsAdded ?? 0) : 0;
}

/** Schedules the course's next round after a finished visit, or completes the course. */
async function scheduleNextRound(
  trx: Knex.Transaction,
  access: StopAccess,
  settings: BusinessSettings,
  userId: number,
): Promise<{ nextVisitId: number | null; nextVisitDate: string | null; nextVisitStatus: "scheduled" | "deferred" | null; deferReason: string | null; courseComplete: boolean }> {
  const none = { nextVisitId: null, nextVisitDate: null, nextVisitStatus: null, deferReason: null };
  const course = await trx("courses").where({ id: access.courseId }).forUpdate().first("id", "booking_id", "rounds_planned", "interval_days", "status");
  if (!course || course.status === "cancelled") return { ...none, courseComplete: false };

  if (access.roundNumber >= course.rounds_planned) {
    if (course.status !== "complete") {
      await trx("courses").where({ id: course.id }).update({ status: "complete", updated_at: trx.fn.now() as unknown as Date });
      if (course.booking_id) {
        await trx("bookings")
          .where({ id: course.booking_id })
          .whereNot({ status: "cancelled" })
          .update({ status: "completed", updated_at: trx.fn.now() as unknown as Date });
      }
      await trx("audit_log").insert({
        actor_user_id: userId,
        action: "course.complete",
        entity_type: "course",
        entity_id: String(course.id),
        before: JSON.stringify({ status: course.status }),
        after: JSON.stringify({ status: "complete", rounds: course.rounds_planned, lastVisitId: access.visitId }),
      });
    }
    return { ...none, courseComplete: true };
  }

  const roundNumber = access.roundNumber + 1;
  const existing = await trx("visits").where({ course_id: course.id, round_number: roundNumber }).first("id", "service_date", "status", "defer_reason");
  if (existing) {
    const status = existing.status === "deferred" ? "deferred" : "scheduled";
    return { nextVisitId: Number(existing.id), nextVisitDate: existing.service_date, nextVisitStatus: status, deferReason: existing.defer_reason, courseComplete: false };
  }

  const yard = await trx("yards").where({ id: access.yardId }).first("colony_count");
  const colonies = yard?.colony_count ?? 0;
  const interval = course.interval_days >= 1 ? course.interval_days : settings.roundIntervalDays;
  const date = addCalendarDays(access.serviceDate, interval);
  // The next round is dosed as the crew found the colonies (their tallies corrected the rows).
  const dosePerColony = yard ? ((await yardDosesPerColony(trx, settings, [access.yardId])).get(access.yardId) ?? 0) : 0;
  const grams = gramsAtDosePerColony(colonies, dosePerColony);
  const room = await lockDayForColonies(trx, settings, date, colonies, grams);
  let deferReason: string | null = null;
  if (room.refusal === "closed") {
    deferReason = `Round ${roundNumber} is due on ${date}, but that day is closed. Move it to a day with room.`;
  } else if (room.gramsShort) {
    deferReason = `Round ${roundNumber} is due on ${date}, but the crews that day can apply ${room.gramsRemaining} g more and this yard needs ${room.addingGrams} g. Move it to a day with room.`;
  } else if (room.refusal === "full") {
    deferReason = `Round ${roundNumber} is due on ${date}, but that day has room for ${room.remaining} more ${room.remaining === 1 ? "colony" : "colonies"} and this yard has ${colonies}. Move it to a day with room.`;
  }
  const status = deferReason ? "deferred" : "scheduled";
  const [visit] = await trx("visits")
    .insert({
      course_id: course.id,
      yard_id: access.yardId,
      round_number: roundNumber,
      service_date: date,
      time_preference: access.timePreference,
      status,
      colonies_expected: colonies,
      defer_reason: deferReason,
    })
    .returning("id");
  await trx("audit_log").insert({
    actor_user_id: userId,
    action: "visit.next_round",
    entity_type: "visit",
    entity_id: String(visit.id),
    after: JSON.stringify({ courseId: course.id, roundNumber, serviceDate: date, status, colonies, deferReason, afterVisitId: access.visitId }),
  });
  return { nextVisitId: Number(visit.id), nextVisitDate: date, nextVisitStatus: status, deferReason, courseComplete: false };
}

const EMAIL_ADDRESS = /^[^\s@<>]+@[^\s@<>]+$/;

async function finishVisitTx(trx: Knex.Transaction, input: FinishInput, now: Date): Promise<{ result: FinishResult; emailIds: number[] }> {
  const access = await stopAccess(trx, input.visitId, input.crewId, true);
  const userId = await assertCrewMember(trx, access.crewId, input.userId);
  const key = parseKey(input.finishKey);
  const stored = await appliedChange(trx, key, access.crewId, "finish", access.visitId);
  // Results stored before roundsAdded existed read as none added.
  if (stored) return { result: { ...(stored as FinishResult), roundsAdded: (stored as Partial<FinishResult>).roundsAdded ?? 0, alreadyFinished: true }, emailIds: [] };

  const settings = await loadBusinessSettings(trx);
  if (access.visitStatus === "done") {
    // Finished before under another key: the first finish's result, nothing new.
    const first = access.finishKey ? await trx("applied_changes").where({ key: access.finishKey }).first("result") : null;
    const result: FinishResult = first ? { ...(first.result as FinishResult), roundsAdded: (first.result as Partial<FinishResult>).roundsAdded ?? 0, alreadyFinished: true } : await finishedResult(trx, access.visitId, settings);
    await recordAppliedChange(trx, { key, crewId: access.crewId, kind: "finish", visitId: access.visitId, userId, result });
    return { result, emailIds: [] };
  }

  const payload = finishPayloadSchema.safeParse({ visitId: access.visitId, weatherNote: input.weatherNote ?? null, notes: input.notes ?? null });
  if (!payload.success) {
    const errors = fieldErrors(payload.error);
    throw new TallyRefused("invalid", firstMessage(errors, "Check the notes."), errors);
  }

  const [tallies, active] = await oneByOne([
    trx("tallies").where({ visit_id: access.visitId }).select("colony_label", "outcome", "dose_grams"),
    trx("colonies").where({ yard_id: access.yardId, active: true }).select("label"),
  ]);
  const tallied = new Set(tallies.map((t) => t.colony_label));
  const missing = active
    .map((c) => c.label)
    .filter((label) => !tallied.has(label))
    .sort((a, b) => a.length - b.length || a.localeCompare(b));
  if (missing.length > 0) {
    throw new TallyRefused("invalid", `Record every colony before finishing: ${missing.join(", ")} ${missing.length === 1 ? "is" : "are"} still open.`);
  }
  if (tallies.length === 0) throw new TallyRefused("invalid", "Record at least one colony before finishing; this yard has no colonies on record.");
  const treatedTallies = tallies.filter((t) => t.outcome === "treated");
  // Supers gate treatment; a visit where every colony was skipped needs no confirmation.
  if (treatedTallies.length > 0 && !access.supersConfirmedAt) throw new TallyRefused("supers_not_confirmed", MESSAGES.supers);

  const finishedAt = notLaterThanNow(input.finishedAt, now);
  // Kept on the visit, like the product: the application records must read as they were when
  // the visit was finished, whatever later happens to the crew members' accounts.
  const finisher = await trx("users").where({ id: userId }).first("name", "applicator_licence");
  const applicators = await applicatorsWhenFinished(trx, access.visitId, userId);
  await trx("visits")
    .where({ id: access.visitId })
    .update({
      status: "done",
      finished_at: finishedAt,
      finished_by: userId,
      finish_key: key,
      weather_note: payload.data.weatherNote,
      notes: payload.data.notes,
      product_name: settings.productName,
      product_registration_number: settings.productRegistrationNumber,
      applicator_name: finisher?.name ?? null,
      applicator_licence: finisher?.applicator_licence ?? null,
      applicators: JSON.stringify(applicators),
      started_at: trx.raw("coalesce(started_at, supers_confirmed_at, ?)", [finishedAt]) as unknown as Date,
      updated_at: trx.fn.now() as unknown as Date,
    });

  // Before the next round is scheduled: brood found may add rounds to a broodless course.
  const roundsAdded = await addRoundsForBroodFound(trx, access, settings, userId);
  const next = await scheduleNextRound(trx, access, settings, userId);
  const invoice = await createInvoiceForVisit(trx, { visitId: access.visitId, issuedOn: dateInZone(now, settings.timeZone), actorUserId: userId });

  // The run is done when its last stop is: the run's lock orders concurrent finishes of one run.
  const run = await trx("runs").where({ id: access.runId }).forUpdate().first("status");
  const open = await trx("stops")
    .join("visits", "visits.id", "stops.visit_id")
    .where("stops.run_id", access.runId)
    .whereNot("visits.status", "done")
    .first(trx.raw("count(*)::int as n"));
  const runDone = (open as unknown as { n: number }).n === 0;
  if (runDone && run!.status !== "done") {
    await trx("runs").where({ id: access.runId }).update({ status: "done", updated_at: trx.fn.now() as unknown as Date });
  } else if (!runDone && run!.status === "published") {
    await trx("runs").where({ id: access.runId }).update({ status: "in_progress", updated_at: trx.fn.now() as unknown as Date });
  }

  const applicationRecord = await applicationRecordForVisit(trx, access.visitId, settings);
  const report = (await loadVisitReport(trx, access.visitId, settings))!;
  const emailIds: number[] = [];
  if (EMAIL_ADDRESS.test(report.customerEmail.trim())) {
    const emailId = await queueEmail(trx, {
      kind: "visit_report",
      to: report.customerEmail,
      ...visitReportEmail({
        customerName: report.customerName,
        yardName: report.yardName,
        serviceDate: report.serviceDate,
        roundNumber: report.roundNumber,
        roundsPlanned: report.roundsPlanned,
        treated: report.treated,
        skipped: report.skipped,
        grams: report.grams,
        productName: report.productName,
        colonies: report.colonies,
        nextRound: report.nextRound ? { date: report.nextRound.date, deferred: report.nextRound.deferred } : null,
        courseComplete: next.courseComplete,
        roundsAdded: report.roundsAdded,
        portalUrl: visitReportUrl(access.visitId),
      }),
      customerId: report.customerId,
      visitId: access.visitId,
      dedupeKey: `visit_report:${access.visitId}`,
    });
    if (emailId !== null) emailIds.push(emailId);
  }

  const result: FinishResult = {
    visitId: access.visitId,
    alreadyFinished: false,
    treated: treatedTallies.length,
    skipped: tallies.length - treatedTallies.length,
    grams: doseGramsForSeason(treatedTallies.map((t) => Number(t.dose_grams))),
    invoiceId: invoice.invoiceId,
    invoiceNumber: invoice.number,
    nextVisitId: next.nextVisitId,
    nextVisitDate: next.nextVisitDate,
    nextVisitStatus: next.nextVisitStatus,
    nextVisitDeferReason: next.deferReason,
    courseComplete: next.courseComplete,
    roundsAdded,
    runDone,
    applicationRecord,
  };
  await trx("audit_log").insert({
    actor_user_id: userId,
    action: "visit.finish",
    entity_type: "visit",
    entity_id: String(access.visitId),
    before: JSON.stringify({ status: access.visitStatus }),
    after: JSON.stringify({ ...result, finishKey: key }),
  });
  await recordAppliedChange(trx, { key, crewId: access.crewId, kind: "finish", visitId: access.visitId, userId, result });
  return { result, emailIds };
}

/**
 * Finishes a visit, in one transaction: the visit done with its totals, the next round of
 * the course scheduled (deferred with a reason when its day is full) or the course and
 * booking completed, the invoice created from the tally (once), the visit report e-mail
 * queued (once), and the run done when this was its last open stop. Needs the supers
 * confirmed (when anything was treated) and a tally for every active colony. Finishing
 * again — with the same key or another — creates nothing and returns the first result.
 */
export async function finishVisit(db: Knex, input: FinishInput, now = new Date()): Promise<FinishResult> {
  const { result, emailIds } = await inTransaction(db, (trx) => finishVisitTx(trx, input, now));
  if (!db.isTransaction) await requestEmailDelivery(emailIds);
  // The invoice e-mail (PDF, pay link) is made by the worker, after commit.
  if (!db.isTransaction && !result.alreadyFinished && result.invoiceId) await requestInvoiceEmail(result.invoiceId);
  return result;
}

// ---------------------------------------------------------------------------------------
// The stop screen

export type StopColony = {
  label: string;
  broodBoxes: number;
  boxType: BoxType;
  boxTypeLabel: string;
  doseGrams: number;
  /** How the dose was worked out: boxes × rate, and the vaporizer loads it takes. */
  doseAssumption: string;
  /** Treated tallies this calendar year before this visit, and the season's cap. */
  applicationsBefore: number;
  applicationCap: number;
  tally: TallyView | null;
};

export type StopDetail = {
  visitId: number;
  status: string;
  serviceDate: string;
  roundNumber: number;
  roundsPlanned: number;
  run: { id: number; version: number; status: string; serviceDate: string; safetyChecked: boolean; safetyCheckedAt: string | null };
  position: number;
  arriveAt: string;
  startAt: string;
  leaveAt: string;
  yard: { id: number; name: string; address: string | null; lat: number; lng: number; accessNotes: string; photoIds: number[]; geoUri: string };
  customer: { name: string; phone: string | null };
  supers: { confirmed: boolean; confirmedAt: string | null; confirmedBy: number | null };
  colonies: StopColony[];
  /** Box types whose dose rate the owner set above the label maximum (confirmed in settings). */
  doseAboveLabel: { boxType: BoxType; label: string; grams: number }[];
  /** The air temperature read at the yard (°C) and the band warning for it. */
  airTempC: number | null;
  airTempWarning: string | null;
  /** Tallies of colonies no longer active at the yard (retired after they were recorded). */
  otherTallies: TallyView[];
  totals: { colonies: number; tallied: number; treated: number; skipped: number; grams: number; gramsPlanned: number };
  finishedAt: string | null;
  settings: {
    doseGramsPerBroodBox: number;
    sublimationSeconds: number;
    entranceClosedMinutes: number;
    timeZone: string;
    unitSystem: "metric" | "us";
    airTempMinC: number;
    airTempMaxC: number;
  };
};

/** Everything the crew's stop screen needs; "not your run" unless the stop is on the crew's run. */
export async function crewStopDetail(db: Knex, input: { visitId: number | string; crewId: number | string }): Promise<StopDetail> {
  const access = await stopAccess(db, input.visitId, input.crewId, false);
  const settings = await loadBusinessSettings(db);
  const [visit, stop, colonies, tallies, photos, applied] = await oneByOne([
    db("visits")
      .join("yards", "yards.id", "visits.yard_id")
      .join("customers", "customers.id", "yards.customer_id")
      .join("courses", "courses.id", "visits.course_id")
      .where("visits.id", access.visitId)
      .first(
        "visits.supers_confirmed_at",
        "visits.supers_confirmed_by",
        "visits.finished_at",
        "visits.air_temp_c",
        "courses.rounds_planned",
        "yards.name as yard_name",
        "yards.address",
        "yards.lat",
        "yards.lng",
        "yards.access_notes",
        "customers.name as customer_name",
        "customers.phone as customer_phone",
      ),
    db("stops").where({ visit_id: access.visitId }).first("position", "arrive_at", "start_at", "leave_at"),
    db("colonies").where({ yard_id: access.yardId, active: true }).orderByRaw("length(label), label").select("id", "label", "brood_boxes", "box_type"),
    db("tallies").where({ visit_id: access.visitId }).select("*"),
    db("attachments")
      .where((q) => q.where({ yard_id: access.yardId }).orWhere({ visit_id: access.visitId }))
      .orderBy("id")
      .select("id"),
    treatedBeforeVisits(db, { yardIds: [access.yardId], serviceDate: access.serviceDate, visitIds: [access.visitId] }),
  ]);
  const views = new Map(tallies.map((t) => [t.colony_label, tallyView(t, access.serviceDate, settings)]));
  const rows: StopColony[] = colonies.map((c) => ({
    label: c.label,
    broodBoxes: c.brood_boxes,
    boxType: c.box_type,
    boxTypeLabel: BOX_TYPE_LABELS[c.box_type],
    doseGrams: doseGramsForColonyOfType(c.brood_boxes, c.box_type, settings),
    doseAssumption: doseAssumption({ broodBoxes: c.brood_boxes, boxType: c.box_type, rates: settings, loadGrams: settings.vaporizerLoadGrams }),
    applicationsBefore: applied.get(Number(c.id)) ?? 0,
    applicationCap: settings.maxApplicationsPerColonyPerSeason,
    tally: views.get(c.label) ?? null,
  }));
  const airTempC = visit!.air_temp_c === null || visit!.air_temp_c === undefined ? null : Number(visit!.air_temp_c);
  const activeLabels = new Set(colonies.map((c) => c.label));
  const all = [...views.values()];
  const treated = all.filter((t) => t.outcome === "treated");
  const lat = Number(visit!.lat);
  const lng = Number(visit!.lng);
  return {
    visitId: access.visitId,
    status: access.visitStatus,
    serviceDate: access.serviceDate,
    roundNumber: access.roundNumber,
    roundsPlanned: visit!.rounds_planned,
    run: {
      id: access.runId,
      version: access.runVersion,
      status: access.runStatus,
      serviceDate: access.runDate,
      safetyChecked: access.safetyCheckedAt !== null,
      safetyCheckedAt: iso(access.safetyCheckedAt),
    },
    position: stop!.position,
    arriveAt: iso(stop!.arrive_at)!,
    startAt: iso(stop!.start_at)!,
    leaveAt: iso(stop!.leave_at)!,
    yard: {
      id: access.yardId,
      name: visit!.yard_name,
      address: visit!.address,
      lat,
      lng,
      accessNotes: visit!.access_notes,
      photoIds: photos.map((p) => Number(p.id)),
      geoUri: `geo:${lat},${lng}`,
    },
    customer: { name: visit!.customer_name, phone: visit!.customer_phone },
    supers: { confirmed: visit!.supers_confirmed_at !== null, confirmedAt: iso(visit!.supers_confirmed_at), confirmedBy: visit!.supers_confirmed_by },
    colonies: rows,
    doseAboveLabel: doseRatesAboveLabel(settings),
    airTempC,
    airTempWarning: airTempC === null ? null : airTemperatureWarning(airTempC, settings, settings.unitSystem),
    otherTallies: all.filter((t) => !activeLabels.has(t.colonyLabel)),
    totals: {
      colonies: rows.length,
      tallied: rows.filter((r) => r.tally).length,
      treated: treated.length,
      skipped: all.length - treated.length,
      grams: doseGramsForSeason(treated.map((t) => t.doseGrams)),
      gramsPlanned: doseGramsForSeason(rows.map((r) => r.doseGrams)),
    },
    finishedAt: iso(visit!.finished_at),
    settings: {
      doseGramsPerBroodBox: settings.doseGramsPerBroodBox,
      sublimationSeconds: settings.sublimationSeconds,
      entranceClosedMinutes: settings.entranceClosedMinutes,
      timeZone: settings.timeZone,
      unitSystem: settings.unitSystem,
      airTempMinC: settings.airTempMinC,
      airTempMaxC: settings.airTempMaxC,
    },
  };
}

// ---------------------------------------------------------------------------------------
// Sync from the phone

export type SyncStatus = "applied" | "duplicate" | "conflict" | "refused";

export type SyncOutcome = {
  key: string;
  kind: SyncKind | null;
  status: SyncStatus;
  message?: string;
  /** The refusal's code, for "conflict" and "refused". */
  code?: TallyRefusalCode;
  fieldErrors?: FieldErrors;
  /** What the change returned (the first result for a duplicate). */
  result?: unknown;
};

const STATUS_BY_CODE: Record<TallyRefusalCode, SyncStatus> = {
  not_your_run: "conflict",
  visit_finished: "conflict",
  safety_not_checked: "refused",
  supers_not_confirmed: "refused",
  invalid: "refused",
};

/**
 * Why a change can no longer be applied because the dispatcher changed its stop meanwhile,
 * or null. Details are given only for a stop the phone had on one of this crew's runs;
 * otherwise the answer is the plain "not on your run".
 */
async function stopConflict(
  db: Knex,
  change: { kind: "safety"; runId?: number; payload: { runId: number } } | { kind: Exclude<SyncKind, "safety">; runId?: number; payload: { visitId: number } },
  crewId: number,
): Promise<string | null> {
  if (change.kind === "safety") {
    const run = await db("runs").where({ id: change.payload.runId }).first("crew_id", "status");
    if (!run || Number(run.crew_id) !== crewId) return "That run is not your crew's.";
    if (run.status === "draft") return "The dispatcher is changing this run; it comes back when it is published again.";
    return null;
  }
  const visitId = change.payload.visitId;
  const [visit, stop, phoneRun] = await oneByOne([
    db("visits").where({ id: visitId }).first("status", "service_date"),
    db("stops").join("runs", "runs.id", "stops.run_id").where("stops.visit_id", visitId).first("runs.id", "runs.crew_id", "runs.status", "runs.service_date"),
    change.runId ? db("runs").where({ id: change.runId }).first("id", "crew_id", "service_date") : Promise.resolve(undefined),
  ]);
  const onThisCrew = stop && Number(stop.crew_id) === crewId;
  const workable = onThisCrew && (WORKABLE_RUN_STATUSES as readonly string[]).includes(stop.status);
  if (visit && workable && visit.status !== "cancelled" && visit.status !== "deferred" && (!phoneRun || Number(phoneRun.id) === Number(stop.id))) {
    return null;
  }
  // The phone had it on one of this crew's runs (or it is on one now): say what changed.
  const known = (phoneRun && Number(phoneRun.crew_id) === crewId) || onThisCrew;
  if (!visit || !known) return "This stop is not on your run.";
  if (visit.status === "cancelled") return "The dispatcher cancelled this visit; nothing was recorded for it.";
  if (onThisCrew && stop.status === "draft") return "The dispatcher is changing this run; this change waits until the run is published again.";
  if (onThisCrew && phoneRun && Number(phoneRun.id) !== Number(stop.id)) return `The dispatcher moved this stop to your run of ${stop.service_date}.`;
  if (stop && !onThisCrew) return "The dispatcher moved this stop to another crew's run.";
  if (phoneRun && visit.service_date !== phoneRun.service_date) return `The dispatcher moved this visit to ${visit.service_date}; it is no longer on your run.`;
  if (visit.status === "deferred") return "The dispatcher took this stop off your run (deferred).";
  return "The dispatcher took this stop off your run.";
}

async function applyOneChange(
  trx: Knex.Transaction,
  change: SyncChange,
  crewId: number,
  userId: number,
  now: Date,
): Promise<{ outcome: SyncOutcome; emailIds: number[] }> {
  const base = { key: change.key, kind: change.kind };
  const stored = await appliedChange(trx, change.key, crewId, change.kind, "visitId" in change.payload ? change.payload.visitId : null);
  if (stored) return { outcome: { ...base, status: "duplicate", message: "Sent before; nothing changed.", result: stored }, emailIds: [] };

  const conflict = await stopConflict(trx, change, crewId);
  if (conflict) return { outcome: { ...base, status: "conflict", code: "not_your_run", message: conflict }, emailIds: [] };

  switch (change.kind) {
    case "safety": {
      const result = await safetyCheckTx(trx, { runId: change.payload.runId, crewId, userId, items: change.payload.items, idempotencyKey: change.key, checkedAt: change.createdAt }, now);
      return { outcome: { ...base, status: result.duplicate ? "duplicate" : "applied", message: result.alreadyChecked ? "The safety check was ticked already." : undefined, result }, emailIds: [] };
    }
    case "supers": {
      const result = await confirmSupersTx(trx, { visitId: change.payload.visitId, crewId, userId, idempotencyKey: change.key, confirmedAt: change.createdAt }, now);
      return { outcome: { ...base, status: result.duplicate ? "duplicate" : "applied", message: result.alreadyConfirmed ? "The supers were confirmed off already." : undefined, result }, emailIds: [] };
    }
    case "tally": {
      const result = await recordTallyTx(trx, { ...change.payload, crewId, userId, idempotencyKey: change.key }, now);
      return {
        outcome: {
          ...base,
          status: result.duplicate ? "duplicate" : "applied",
          message: result.superseded ? `A later tally of ${result.colonyLabel} from another phone was kept.` : undefined,
          result,
        },
        emailIds: [],
      };
    }
    case "air_temp": {
      const result = await recordAirTemperatureTx(trx, { visitId: change.payload.visitId, crewId, userId, idempotencyKey: change.key, airTempC: change.payload.airTempC });
      return { outcome: { ...base, status: result.duplicate ? "duplicate" : "applied", message: result.warning ?? undefined, result }, emailIds: [] };
    }
    case "finish": {
      const { result, emailIds } = await finishVisitTx(
        trx,
        { visitId: change.payload.visitId, crewId, userId, finishKey: change.key, weatherNote: change.payload.weatherNote, notes: change.payload.notes, finishedAt: change.createdAt },
        now,
      );
      return { outcome: { ...base, status: "applied", message: result.alreadyFinished ? "This visit was finished already; nothing new was created." : undefined, result }, emailIds };
    }
  }
}

function keyOf(raw: unknown, index: number): string {
  const key = typeof raw === "object" && raw !== null ? (raw as { key?: unknown }).key : undefined;
  return typeof key === "string" && key.length > 0 ? key.slice(0, 200) : `#${index}`;
}

function kindOf(raw: unknown): SyncKind | null {
  const kind = typeof raw === "object" && raw !== null ? (raw as { kind?: unknown }).kind : undefined;
  return (SYNC_KINDS as readonly unknown[]).includes(kind) ? (kind as SyncKind) : null;
}

function refusedOutcome(key: string, kind: SyncKind | null, error: TallyRefused): SyncOutcome {
  return {
    key,
    kind,
    status: STATUS_BY_CODE[error.code],
    code: error.code,
    message: error.code === "visit_finished" ? "This visit was finished meanwhile; this change was not recorded." : error.message,
    fieldErrors: Object.keys(error.fieldErrors).length ? error.fieldErrors : undefined,
  };
}

/**
 * Applies a phone's queued changes in order, each in its own transaction, and answers per
 * change: "applied"; "duplicate" (its key was applied before: nothing counted twice, the
 * first result returned); "conflict" (the stop is no longer on the crew's run, or the visit
 * was moved or cancelled, or finished meanwhile: nothing applied, the message says what
 * changed); "refused" (the change is not valid: the message says why). E-mails queued by
 * finishes are handed to the worker after their transaction commits.
 */
export async function applySyncBatch(
  db: Knex,
  input: { crewId: number | string; userId: number | string; changes: readonly unknown[] },
  now = new Date(),
): Promise<SyncOutcome[]> {
  const crewId = toId(input.crewId);
  const userId = toId(input.userId);
  const outcomes: SyncOutcome[] = [];
  const emailIds: number[] = [];
  const member = crewId !== null && userId !== null ? await db("crew_members").where({ crew_id: crewId, user_id: userId }).first("user_id") : null;
  for (const [index, raw] of input.changes.entries()) {
    const key = keyOf(raw, index);
    const kind = kindOf(raw);
    if (!member) {
      outcomes.push({ key, kind, status: "refused", code: "not_your_run", message: "You are not on a crew; ask the dispatcher." });
      continue;
    }
    const parsed = syncChangeSchema.safeParse(raw);
    if (!parsed.success) {
      const errors = fieldErrors(parsed.error);
      outcomes.push({ key, kind, status: "refused", code: "invalid", message: firstMessage(errors, "This change cannot be read."), fieldErrors: errors });
      continue;
    }
    try {
      const { outcome, emailIds: queued } = await inTransaction(db, (trx) => applyOneChange(trx, parsed.data, crewId!, userId!, now));
      outcomes.push(outcome);
      emailIds.push(...queued);
    } catch (error) {
      if (!(error instanceof TallyRefused)) throw error;
      outcomes.push(refusedOutcome(key, kind, error));
    }
  }
  if (!db.isTransaction) await requestEmailDelivery(emailIds);
  for (const o of outcomes) {
    const finished = o.kind === "finish" && o.status === "applied" ? (o.result as FinishResult) : null;
    if (!db.isTransaction && finished && !finished.alreadyFinished && finished.invoiceId) await requestInvoiceEmail(finished.invoiceId);
  }
  return outcomes;
}
