import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { settingsFormDefaults } from "~/forms/settings-form";
import { bookYards } from "~/models/bookings.server";
import { moveStop, planServiceDay, publishRun, setStopLock } from "~/models/day-plan.server";
import { resendInvoiceEmail } from "~/models/invoice-resend.server";
import { crewSchema } from "~/forms/crew";
import { workingDaySchema } from "~/forms/working-day";
import { createCrew } from "~/models/crews.server";
import { voidInvoice } from "~/models/office-invoices.server";
import { changePassword } from "~/models/profile.server";
import { changeStaffRole, deactivateStaff, inviteStaff } from "~/models/staff.server";
import { changeWorkingDay } from "~/models/working-days.server";
import { handleStripeWebhook, recordOfficePayment, refundPayment, startCardPayment } from "~/models/payments.server";
import { loadBusinessSettings, updateBusinessSettingsFromForm } from "~/models/settings.server";
import { confirmRunSafetyCheck, confirmSupersOff, finishVisit, recordTally } from "~/models/tallies.server";
import type { AuditLogRow } from "~/models/tables";
import { cancelVisit, changeVisitTimeOfDay, rescheduleVisit } from "~/models/visit-changes.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { type StripeFake, startStripeFake } from "~/services/stripe-fake/server";
import { createStripeClient, type Stripe } from "~/services/stripe.server";
import { ALL_SAFE, aCrew, aKey, aStop, type TestCrew, type TestStop } from "./crew-fixtures";
import { anInvoice } from "./payment-fixtures";
import { resetDatabase } from "./reset-database";

// Acceptance: every write path of bookings, runs, tallies, invoices, payments and settings
// leaves an audit entry. Each test calls the real model function (never inserts audit rows
// itself) and checks the one new audit_log row: action, record, actor and the key values.

const SECRET = "whsec_audit_paths_secret";
let fake: StripeFake;
let stripe: Stripe;

beforeAll(async () => {
  fake = await startStripeFake({ port: 0, webhookSecret: SECRET, webhookUrl: null, log: () => {} });
  stripe = createStripeClient({ secretKey: "sk_test_varroute", webhookSecret: SECRET, api: { host: "127.0.0.1", port: fake.port, protocol: "http" }, local: true });
});
afterAll(async () => {
  await fake.stop();
  await stopJobs();
  await db.destroy();
});

const TZ = defaultBusinessSettings.timeZone;
const today = dateInZone(new Date(), TZ);
const day = addCalendarDays(today, 10);
const travel = { osrmUrl: null }; // the built-in estimate, whatever the environment says

let seq = 0;
async function aUser(role: "owner" | "office" | "dispatcher" | "customer", name: string) {
  seq++;
  const [user] = await db("users")
    .insert({ email: `${role}${seq}.${Math.random().toString(36).slice(2, 8)}@example.test`, password_hash: "x", role, name })
    .returning("id");
  return Number(user.id);
}

let owner: number;
let office: number;
let dispatcher: number;
beforeEach(async () => {
  await resetDatabase(db);
  owner = await aUser("owner", "Olive Owner");
  office = await aUser("office", "Otto Office");
  dispatcher = await aUser("dispatcher", "Dee Spatcher");
});

/** The newest audit id now: entries after it are the ones the call under test made. */
async function mark(): Promise<number> {
  const row = (await db("audit_log").first(db.raw("coalesce(max(id), 0)::int as id"))) as unknown as { id: number };
  return Number(row.id);
}

/** The single entry of `action` written since `since`. */
async function entry(since: number, action: string): Promise<AuditLogRow & { before: Record<string, unknown> | null; after: Record<string, unknown> | null }> {
  const rows = await db("audit_log").where("id", ">", since).where({ action }).orderBy("id");
  expect(rows.map((r) => r.action)).toEqual([action]);
  return rows[0] as AuditLogRow & { before: Record<string, unknown> | null; after: Record<string, unknown> | null };
}

async function newActions(since: number): Promise<string[]> {
  return db("audit_log").where("id", ">", since).orderBy("id").pluck("action");
}

/** A customer (with a portal user) and one yard of `colonies` colonies. */
async function aCustomerYard(colonies: number, brood: "brood" | "broodless" = "brood") {
  const userId = await aUser("customer", "Casey Keeper");
  const [customer] = await db("customers").insert({ user_id: userId, name: "Casey Keeper", email: `casey${seq}@example.test` }).returning("id");
  const [yard] = await db("yards")
    .insert({ customer_id: customer.id, name: `Ridge ${seq}`, lat: 42.45 + seq * 0.001, lng: -76.45, colony_count: colonies, brood_status: brood })
    .returning("id");
  return { userId, customerId: Number(customer.id), yardId: Number(yard.id) };
}

async function aBookedVisit(colonies = 5) {
  const c = await aCustomerYard(colonies);
  const booked = await bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yardId], serviceDate: day, timePreference: "any", notes: null });
  return { ...c, visitId: booked.visitIds[0], bookingId: booked.bookingIds[0] };
}

async function aShopCrew(name: string) {
  const [crew] = await db("crews")
    .insert({ name, start_label: `${name} shop`, start_lat: 42.44, start_lng: -76.5, work_start: "08:00", work_end: "17:00", vaporizers: 2 })
    .returning("id");
  return Number(crew.id);
}

describe("bookings", () => {
  it("booking a yard: booking.create by the customer with the day, colonies and rounds", async () => {
    await aShopCrew("Crew A");
    const c = await aCustomerYard(6, "brood");
    const since = await mark();
    const booked = await bookYards(db, { customerId: c.customerId, userId: c.userId, yardIds: [c.yardId], serviceDate: day, timePreference: "morning", notes: null });
    const row = await entry(since, "booking.create");
    expect(row).toMatchObject({ entity_type: "booking", entity_id: String(booked.bookingIds[0]), actor_user_id: c.userId });
    expect(row.after).toEqual({ yardId: c.yardId, serviceDate: day, colonies: 6, rounds: defaultBusinessSettings.roundsWithBrood });
  });

  it("moving a visit: visit.reschedule by the dispatcher with the old and new day and the reason", async () => {
    await aShopCrew("Crew A");
    const v = await aBookedVisit();
    const to = addCalendarDays(day, 3);
    const since = await mark();
    await rescheduleVisit(db, { visitId: v.visitId, toDate: to, reason: "Rain forecast", actorUserId: dispatcher });
    const row = await entry(since, "visit.reschedule");
    expect(row).toMatchObject({ entity_type: "visit", entity_id: String(v.visitId), actor_user_id: dispatcher });
    expect(row.before).toEqual({ serviceDate: day });
    expect(row.after).toEqual({ serviceDate: to, reason: "Rain forecast" });
  });

  it("changing a visit's time of day: visit.time_of_day by the dispatcher with the old and new time", async () => {
    await aShopCrew("Crew A");
    const v = await aBookedVisit();
    const since = await mark();
    await changeVisitTimeOfDay(db, { visitId: v.visitId, timePreference: "morning", actorUserId: dispatcher });
    const row = await entry(since, "visit.time_of_day");
    expect(row).toMatchObject({ entity_type: "visit", entity_id: String(v.visitId), actor_user_id: dispatcher });
    expect(row.before).toEqual({ timePreference: "any" });
    expect(row.after).toEqual({ timePreference: "morning", takenOffRun: false });
  });

  it("cancelling a visit: visit.cancel by the dispatcher with the reason", async () => {
    await aShopCrew("Crew A");
    const v = await aBookedVisit();
    const since = await mark();
    await cancelVisit(db, { visitId: v.visitId, reason: "Hives sold", actorUserId: dispatcher });
    const row = await entry(since, "visit.cancel");
    expect(row).toMatchObject({ entity_type: "visit", entity_id: String(v.visitId), actor_user_id: dispatcher });
    expect(row.before).toEqual({ status: "scheduled", serviceDate: day });
    expect(row.after).toEqual({ status: "cancelled", reason: "Hives sold" });
  });
});

describe("runs", () => {
  /** One crew, two booked visits on the day, planned. */
  async function aPlannedDay() {
    const crewId = await aShopCrew("Crew North");
    const a = await aBookedVisit(4);
    const b = await aBookedVisit(3);
    const summary = await planServiceDay(db, { date: day, actorUserId: dispatcher, keepLocked: true, travel });
    const run = summary.crews.find((c) => c.crewId === crewId)!;
    return { crewId, runId: run.runId!, visitIds: [a.visitId, b.visitId], summary };
  }

  it("planning a day: service_day.plan for the day and run.plan for the new run, by the dispatcher", async () => {
    const crewId = await aShopCrew("Crew North");
    const a = await aBookedVisit(4);
    const b = await aBookedVisit(3);
    const since = await mark();
    const summary = await planServiceDay(db, { date: day, actorUserId: dispatcher, keepLocked: true, travel });
    const runId = summary.crews.find((c) => c.crewId === crewId)!.runId!;

    const dayRow = await entry(since, "service_day.plan");
    expect(dayRow).toMatchObject({ entity_type: "service_day", entity_id: day, actor_user_id: dispatcher });
    expect(dayRow.after).toMatchObject({ keepLocked: true, crews: [{ crewId, runId, stops: 2, colonies: 7 }], deferred: [] });

    const runRow = await entry(since, "run.plan");
    expect(runRow).toMatchObject({ entity_type: "run", entity_id: String(runId), actor_user_id: dispatcher, before: null });
    expect(runRow.after).toMatchObject({ status: "draft", version: 1 });
    expect([...(runRow.after!.stops as number[])].sort()).toEqual([a.visitId, b.visitId].sort());
  });

  it("publishing a run: run.publish with the status, stops and day", async () => {
    const plan = await aPlannedDay();
    const since = await mark();
    await publishRun(db, { runId: plan.runId, actorUserId: dispatcher });
    const row = await entry(since, "run.publish");
    expect(row).toMatchObject({ entity_type: "run", entity_id: String(plan.runId), actor_user_id: dispatcher });
    expect(row.before).toEqual({ status: "draft", version: 1 });
    expect(row.after).toEqual({ status: "published", version: 1, stops: 2, service_date: day });
  });

  it("moving a stop: stop.move with the old and new position", async () => {
    const plan = await aPlannedDay();
    const first = (await db("stops").where({ run_id: plan.runId }).orderBy("position").first("visit_id"))!;
    const since = await mark();
    await moveStop(db, { date: day, visitId: Number(first.visit_id), toCrewId: plan.crewId, toPosition: 1, actorUserId: dispatcher, travel });
    const row = await entry(since, "stop.move");
    expect(row).toMatchObject({ entity_type: "visit", entity_id: String(first.visit_id), actor_user_id: dispatcher });
    expect(row.before).toEqual({ runId: plan.runId, crewId: plan.crewId, position: 0 });
    expect(row.after).toEqual({ runId: plan.runId, crewId: plan.crewId, position: 1 });
  });

  it("locking and unlocking a stop: stop.lock then stop.unlock; locking a locked stop writes nothing", async () => {
    const plan = await aPlannedDay();
    const visitId = plan.visitIds[1];
    const stop = (await db("stops").where({ visit_id: visitId }).first("position"))!;
    let since = await mark();
    await setStopLock(db, { visitId, locked: true, actorUserId: dispatcher });
    const locked = await entry(since, "stop.lock");
    expect(locked).toMatchObject({ entity_type: "visit", entity_id: String(visitId), actor_user_id: dispatcher });
    expect(locked.before).toEqual({ locked: false });
    expect(locked.after).toEqual({ locked: true, runId: plan.runId, crewId: plan.crewId, position: stop.position });

    since = await mark();
    await setStopLock(db, { visitId, locked: true, actorUserId: dispatcher });
    expect(await newActions(since)).toEqual([]);
    await setStopLock(db, { visitId, locked: false, actorUserId: dispatcher });
    expect((await entry(since, "stop.unlock")).after).toMatchObject({ locked: false });
  });
});

describe("tallies", () => {
  const DATE = "2026-11-10";
  let crew: TestCrew;
  let stop: TestStop;
  let member: number;
  beforeEach(async () => {
    crew = await aCrew(db, "Crew South");
    member = crew.members[0].id;
    stop = await aStop(db, crew, { date: DATE, colonies: 2, broodBoxes: 2, rounds: 1 });
  });

  const safety = () => confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: member, items: ALL_SAFE });
  const supers = () => confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: member, idempotencyKey: aKey("supers") });
  const tally = (label: string, outcome: "treated" | "skipped", recordedAt: Date, more: { mites?: number; beesSampled?: number } = {}) =>
    recordTally(db, {
      visitId: stop.visitId,
      crewId: crew.id,
      userId: member,
      idempotencyKey: aKey("tally"),
      colonyLabel: label,
      outcome,
      skipReason: outcome === "skipped" ? "queenless" : null,
      mites: more.mites ?? null,
      beesSampled: more.beesSampled ?? null,
      recordedAt,
    });

  it("the safety check: run.safety_check by the crew member, the run now under way", async () => {
    const since = await mark();
    await safety();
    const row = await entry(since, "run.safety_check");
    expect(row).toMatchObject({ entity_type: "run", entity_id: String(stop.runId), actor_user_id: member });
    expect(row.before).toMatchObject({ status: "published", safetyCheckedAt: null });
    expect(row.after).toMatchObject({ status: "in_progress", items: ALL_SAFE });
    expect(typeof row.after!.safetyCheckedAt).toBe("string");
  });

  it("supers off: visit.supers_off by the crew member", async () => {
    await safety();
    const since = await mark();
    const result = await supers();
    const row = await entry(since, "visit.supers_off");
    expect(row).toMatchObject({ entity_type: "visit", entity_id: String(stop.visitId), actor_user_id: member });
    expect(row.after).toEqual({ status: "in_progress", supersConfirmedAt: result.supersConfirmedAt });
  });

  it("recording a colony: tally.record with the outcome, dose and wash count", async () => {
    await safety();
    await supers();
    const since = await mark();
    await tally("H1", "treated", new Date(Date.now() - 60_000), { mites: 7, beesSampled: 300 });
    const row = await entry(since, "tally.record");
    expect(row).toMatchObject({ entity_type: "visit", entity_id: String(stop.visitId), actor_user_id: member, before: null });
    // Two brood boxes at the default dose rate.
    expect(row.after).toMatchObject({ colonyLabel: "H1", outcome: "treated", doseGrams: 2 * defaultBusinessSettings.doseGramsPerBroodBox, mites: 7, beesSampled: 300 });
  });

  it("changing a colony's tally: tally.change with the tally before and after", async () => {
    await safety();
    await supers();
    await tally("H2", "skipped", new Date(Date.now() - 60_000));
    const since = await mark();
    await tally("H2", "treated", new Date());
    const row = await entry(since, "tally.change");
    expect(row).toMatchObject({ entity_type: "visit", entity_id: String(stop.visitId), actor_user_id: member });
    expect(row.before).toMatchObject({ colonyLabel: "H2", outcome: "skipped", skipReason: "queenless" });
    expect(row.after).toMatchObject({ colonyLabel: "H2", outcome: "treated", skipReason: null, doseGrams: 2 * defaultBusinessSettings.doseGramsPerBroodBox });
  });

  it("finishing a visit: visit.finish with the totals, and invoice.create for the invoice it made", async () => {
    await safety();
    await supers();
    await tally("H1", "treated", new Date(Date.now() - 60_000));
    await tally("H2", "skipped", new Date(Date.now() - 30_000));
    const since = await mark();
    const result = await finishVisit(db, { visitId: stop.visitId, crewId: crew.id, userId: member, finishKey: aKey("finish"), weatherNote: "Cold and calm" });
    expect(result.invoiceId).not.toBeNull();

    const finished = await entry(since, "visit.finish");
    expect(finished).toMatchObject({ entity_type: "visit", entity_id: String(stop.visitId), actor_user_id: member });
    expect(finished.before).toEqual({ status: "in_progress" }); // under way since the supers came off
    expect(finished.after).toMatchObject({ treated: 1, skipped: 1, invoiceId: result.invoiceId, invoiceNumber: result.invoiceNumber });

    const invoice = (await db("invoices").where({ id: result.invoiceId! }).first())!;
    const created = await entry(since, "invoice.create");
    expect(created).toMatchObject({ entity_type: "invoice", entity_id: String(invoice.id), actor_user_id: member });
    expect(created.after).toMatchObject({ number: invoice.number, visitId: stop.visitId, customerId: stop.customerId, coloniesTreated: 1, totalCents: invoice.total_cents });
  });
});

describe("invoices", () => {
  it("voiding an invoice: invoice.void by the office with the reason", async () => {
    const { invoiceId } = await anInvoice(db, 5_000);
    const since = await mark();
    await voidInvoice(db, { invoiceId, reason: "Entered twice", actorUserId: office });
    const row = await entry(since, "invoice.void");
    expect(row).toMatchObject({ entity_type: "invoice", entity_id: String(invoiceId), actor_user_id: office });
    expect(row.before).toEqual({ status: "open" });
    expect(row.after).toEqual({ status: "void", reason: "Entered twice" });
  });

  it("resending an invoice: invoice.email_resent by the office with the address and the e-mail queued", async () => {
    const { invoiceId, customerId, number } = await anInvoice(db, 7_500);
    const customer = (await db("customers").where({ id: customerId }).first("email"))!;
    const since = await mark();
    const sent = await resendInvoiceEmail(db, { invoiceId, actorUserId: office });
    expect(sent.status).toBe("queued");
    const row = await entry(since, "invoice.email_resent");
    expect(row).toMatchObject({ entity_type: "invoice", entity_id: String(invoiceId), actor_user_id: office });
    expect(row.after).toMatchObject({ emailId: sent.status === "queued" ? sent.emailId : -1, to: customer.email, number });
  });
});

describe("payments", () => {
  it("an office payment: payment.record by the office, and invoice.status when it settles the invoice", async () => {
    const { invoiceId } = await anInvoice(db, 4_000);
    let since = await mark();
    const part = await recordOfficePayment(db, { invoiceId, amountCents: 1_500, method: "cheque", reference: "Cheque 101", actorUserId: office });
    const row = await entry(since, "payment.record");
    expect(row).toMatchObject({ entity_type: "payment", entity_id: String(part.paymentId), actor_user_id: office });
    expect(row.after).toEqual({ invoiceId, amountCents: 1_500, method: "cheque", reference: "Cheque 101" });
    expect(await newActions(since)).toEqual(["payment.record"]); // still open: no status change

    since = await mark();
    await recordOfficePayment(db, { invoiceId, amountCents: 2_500, method: "cash", actorUserId: office });
    const status = await entry(since, "invoice.status");
    expect(status).toMatchObject({ entity_type: "invoice", entity_id: String(invoiceId), actor_user_id: office });
    expect(status.before).toEqual({ status: "open" });
    expect(status.after).toMatchObject({ status: "paid", paidCents: 4_000, balanceCents: 0 });
  });

  it("an office refund: refund.record by the office with the payment, amount and reason", async () => {
    const { invoiceId } = await anInvoice(db, 3_000);
    const { paymentId } = await recordOfficePayment(db, { invoiceId, amountCents: 3_000, method: "cash", actorUserId: office });
    const since = await mark();
    const refund = await refundPayment(db, { paymentId, amountCents: 1_200, reason: "Charged one colony too many", actorUserId: office });
    const row = await entry(since, "refund.record");
    expect(row).toMatchObject({ entity_type: "refund", entity_id: String(refund.refundId), actor_user_id: office });
    expect(row.after).toEqual({ paymentId, method: "cash", amountCents: 1_200, reason: "Charged one colony too many" });
  });

  it("a card payment through a signed webhook: payment.card and invoice.status with no user (Stripe)", async () => {
    const { invoiceId } = await anInvoice(db, 8_800);
    const start = await startCardPayment(db, { invoiceId, successUrl: "http://app.test/ok", cancelUrl: "http://app.test/cancel" }, { stripe, webhookSecret: SECRET });
    const completed = await fake.pay(start.sessionId);
    const rawBody = JSON.stringify(completed);
    const since = await mark();
    await handleStripeWebhook(db, { rawBody, signature: fake.sign(rawBody) }, { stripe, webhookSecret: SECRET });
    const payment = (await db("payments").where({ invoice_id: invoiceId }).first())!;
    const row = await entry(since, "payment.card");
    expect(row).toMatchObject({ entity_type: "payment", entity_id: String(payment.id), actor_user_id: null });
    expect(row.after).toMatchObject({ invoiceId, amountCents: 8_800, stripePaymentIntentId: payment.stripe_payment_intent_id, via: "checkout.session.completed" });
    const status = await entry(since, "invoice.status");
    expect(status).toMatchObject({ entity_id: String(invoiceId), actor_user_id: null });
    expect(status.after).toMatchObject({ status: "paid" });
  });
});

describe("card checkout guards", () => {
  it("voiding an invoice with an open checkout: invoice.checkout_expired naming why", async () => {
    const { invoiceId } = await anInvoice(db, 6_600);
    const start = await startCardPayment(db, { invoiceId, successUrl: "http://app.test/ok", cancelUrl: "http://app.test/cancel" }, { stripe, webhookSecret: SECRET });
    const since = await mark();
    await voidInvoice(db, { invoiceId, reason: "Booked twice", actorUserId: office }, { stripe });
    const row = await entry(since, "invoice.checkout_expired");
    expect(row).toMatchObject({ entity_type: "invoice", entity_id: String(invoiceId), actor_user_id: office });
    expect(row.after).toMatchObject({ stripeCheckoutSessionId: start.sessionId, status: "expired", why: "void" });
  });

  it("a card payment on a void invoice: payment.card_refused by Stripe with the reason, no payment recorded", async () => {
    const { invoiceId } = await anInvoice(db, 4_400);
    const start = await startCardPayment(db, { invoiceId, successUrl: "http://app.test/ok", cancelUrl: "http://app.test/cancel" }, { stripe, webhookSecret: SECRET });
    const completed = await fake.pay(start.sessionId);
    // Voided while the customer was paying, before the webhook arrived.
    await db("invoices").where({ id: invoiceId }).update({ status: "void" });
    const rawBody = JSON.stringify(completed);
    const since = await mark();
    await handleStripeWebhook(db, { rawBody, signature: fake.sign(rawBody) }, { stripe, webhookSecret: SECRET });
    const row = await entry(since, "payment.card_refused");
    expect(row).toMatchObject({ entity_type: "invoice", entity_id: String(invoiceId), actor_user_id: null });
    expect(row.after).toMatchObject({ invoiceId, reason: "invoice_not_open", amountCents: 4_400 });
    expect(await db("payments").where({ invoice_id: invoiceId })).toHaveLength(0);
  });
});

describe("staff and accounts", () => {
  it("inviting, changing a role and deactivating: staff.invite, staff.role, staff.deactivate by the owner", async () => {
    let since = await mark();
    const { invitationId } = await inviteStaff(db, { actorUserId: owner, name: "Ivy Invitee", email: "ivy@example.test", role: "office", crewId: null });
    const invited = await entry(since, "staff.invite");
    expect(invited).toMatchObject({ actor_user_id: owner, entity_id: String(invitationId) });
    expect(invited.after).toMatchObject({ email: "ivy@example.test", role: "office" });

    since = await mark();
    await changeStaffRole(db, { actorUserId: owner, userId: office, role: "dispatcher" });
    const role = await entry(since, "staff.role");
    expect(role).toMatchObject({ actor_user_id: owner, entity_type: "user", entity_id: String(office) });
    expect(role.before).toMatchObject({ role: "office" });
    expect(role.after).toMatchObject({ role: "dispatcher" });

    since = await mark();
    await deactivateStaff(db, { actorUserId: owner, userId: dispatcher });
    const off = await entry(since, "staff.deactivate");
    expect(off).toMatchObject({ actor_user_id: owner, entity_type: "user", entity_id: String(dispatcher) });
  });

  it("changing one's password: user.password_change by that person, without the password", async () => {
    const since = await mark();
    await changePassword(db, { userId: String(office), password: "a-fresh-password-2027", keepSessionToken: null });
    const row = await entry(since, "user.password_change");
    expect(row).toMatchObject({ actor_user_id: office, entity_type: "user", entity_id: String(office) });
    expect(JSON.stringify([row.before, row.after])).not.toContain("a-fresh-password-2027");
  });
});

describe("crews and working days", () => {
  it("adding a crew: crew.create by the dispatcher with its limits and weekdays", async () => {
    const input = crewSchema.parse({
      name: "Crew East", memberIds: [], startLabel: "Shop", startLat: "42.4", startLng: "-76.5", endLabel: "", endLat: "", endLng: "",
      workStart: "08:00", workEnd: "17:00", vaporizers: "2", maxColoniesPerDay: "40", maxDoseGramsPerDay: "", workingWeekdays: ["1", "2", "3"], active: "on",
    });
    const since = await mark();
    const crewId = await createCrew(db, input, dispatcher);
    const row = await entry(since, "crew.create");
    expect(row).toMatchObject({ actor_user_id: dispatcher, entity_type: "crew", entity_id: String(crewId) });
    expect(row.after).toMatchObject({ name: "Crew East", maxColoniesPerDay: 40 });
  });

  it("closing a day: service_day.close by the dispatcher with the note", async () => {
    const change = workingDaySchema.parse({ intent: "close_day", date: day, note: "Rain all day" });
    const since = await mark();
    await changeWorkingDay(db, change, dispatcher);
    const row = await entry(since, "service_day.close");
    expect(row).toMatchObject({ actor_user_id: dispatcher, entity_id: day });
    expect(row.after).toMatchObject({ closed: true, note: "Rain all day" });
  });
});

describe("settings", () => {
  it("saving the settings: settings.update by the owner with the values before and after", async () => {
    const form = (changes: Record<string, string>) => ({ ...settingsFormDefaults(defaultBusinessSettings), productRegistrationNumber: "TEST-REG-1", ...changes });
    let since = await mark();
    await updateBusinessSettingsFromForm(db, form({ pricePerColonyCents: "31.25" }), owner);
    const first = await entry(since, "settings.update");
    expect(first).toMatchObject({ entity_type: "settings", entity_id: "business", actor_user_id: owner, before: null });
    expect(first.after).toMatchObject({ pricePerColonyCents: 3125 });
    expect(first.after).toEqual(JSON.parse(JSON.stringify(await loadBusinessSettings(db))));

    since = await mark();
    await updateBusinessSettingsFromForm(db, form({ pricePerColonyCents: "31.25", tripFeeCents: "40" }), owner);
    const second = await entry(since, "settings.update");
    expect(second.before).toMatchObject({ pricePerColonyCents: 3125, tripFeeCents: defaultBusinessSettings.tripFeeCents });
    expect(second.after).toMatchObject({ pricePerColonyCents: 3125, tripFeeCents: 4000 });
  });

  it("raising the record retention: customer.records_hold_extended by the owner for each hold still running", async () => {
    const form = (years: string) => ({ ...settingsFormDefaults(defaultBusinessSettings), productRegistrationNumber: "TEST-REG-1", recordRetentionYears: years });
    await updateBusinessSettingsFromForm(db, form("2"), owner);
    // A customer treated on 2026-11-10 who deleted their account: held until 2028-11-10.
    const crew = await aCrew(db, "Crew Holds");
    const member = crew.members[0].id;
    const stop = await aStop(db, crew, { date: "2026-11-10", colonies: 1, rounds: 1 });
    await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: member, items: ALL_SAFE });
    await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: member, idempotencyKey: aKey("supers") });
    await recordTally(db, { visitId: stop.visitId, crewId: crew.id, userId: member, idempotencyKey: aKey("tally"), colonyLabel: stop.labels[0], outcome: "treated", recordedAt: new Date() });
    await finishVisit(db, { visitId: stop.visitId, crewId: crew.id, userId: member, finishKey: aKey("finish") });
    await db("customers").where({ id: stop.customerId }).update({ records_kept_until: "2028-11-10" });

    const since = await mark();
    await updateBusinessSettingsFromForm(db, form("5"), owner);
    const extended = await entry(since, "customer.records_hold_extended");
    expect(extended).toMatchObject({ entity_type: "customer", entity_id: String(stop.customerId), actor_user_id: owner });
    expect(extended.before).toEqual({ keptUntil: "2028-11-10" });
    expect(extended.after).toEqual({ keptUntil: "2031-11-10", recordRetentionYears: 5 });
  });

  it("a refused save leaves no entry", async () => {
    const since = await mark();
    const result = await updateBusinessSettingsFromForm(db, { ...settingsFormDefaults(defaultBusinessSettings), productRegistrationNumber: "TEST-REG-1", roundIntervalDays: "30" }, owner);
    expect(result.ok).toBe(false);
    expect(await newActions(since)).toEqual([]);
  });
});
