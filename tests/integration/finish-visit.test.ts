import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { createInvoiceForVisit } from "~/models/invoices-create.server";
import { loadBusinessSettings, saveBusinessSettings } from "~/models/settings.server";
import { confirmRunSafetyCheck, confirmSupersOff, finishVisit, recordTally, TallyRefused, visitReportForCustomer } from "~/models/tallies.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { ALL_SAFE, aCrew, aKey, aStop, type TestCrew, type TestStop } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const DATE = "2026-11-10";
const TODAY = dateInZone(new Date(), defaultBusinessSettings.timeZone);
const YEAR = Number(TODAY.slice(0, 4));
let crew: TestCrew;
let owner: number;

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew North", "NY-C-12345");
  const [user] = await db("users").insert({ email: "owner@example.test", password_hash: "x", role: "owner", name: "Owner" }).returning("id");
  owner = Number(user.id);
  await saveBusinessSettings(
    db,
    {
      ...defaultBusinessSettings,
      productName: "Test oxalic acid dihydrate",
      productRegistrationNumber: "EPA Reg. No. 00000-0",
      pricePerColonyCents: 2500,
      tripFeeCents: 3500,
      minimumPerVisitCents: 5000,
      taxRateBasisPoints: 800,
      paymentTermsDays: 14,
      roundIntervalDays: 7,
    },
    owner,
  );
});

async function refusal(promise: Promise<unknown>): Promise<TallyRefused> {
  const error = await promise.then(
    () => null,
    (e: unknown) => e,
  );
  expect(error).toBeInstanceOf(TallyRefused);
  return error as TallyRefused;
}

/** Safety check, supers off, and a tally for every colony (H3 skipped when asked; H1 and H2 washed). */
async function tallyWholeStop(stop: TestStop, options: { skipH3?: boolean; user?: number } = {}) {
  const userId = options.user ?? crew.members[0].id;
  await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId, idempotencyKey: aKey("supers") });
  for (const label of stop.labels) {
    const skip = options.skipH3 && label === "H3";
    await recordTally(db, {
      visitId: stop.visitId,
      crewId: crew.id,
      userId,
      idempotencyKey: aKey("tally"),
      colonyLabel: label,
      outcome: skip ? "skipped" : "treated",
      skipReason: skip ? "dead_out" : null,
      skipNote: skip ? "No cluster left" : null,
      mites: label === "H1" ? 9 : label === "H2" ? 21 : null,
      beesSampled: label === "H1" || label === "H2" ? 300 : null,
      recordedAt: new Date(),
    });
  }
}

function finish(stop: TestStop, finishKey = aKey("finish"), userId = crew.members[0].id) {
  return finishVisit(db, { visitId: stop.visitId, crewId: crew.id, userId, finishKey, weatherNote: "Cold, calm, 4 °C" });
}

describe("finishing a visit", () => {
  it("sent twice, with the same key and with another, creates one invoice, one next round and one report", async () => {
    const stop = await aStop(db, crew, { date: DATE, colonies: 4, rounds: 3, intervalDays: 7 });
    await tallyWholeStop(stop, { skipH3: true });
    const key = aKey("finish");
    const first = await finish(stop, key);
    const sameKey = await finish(stop, key);
    const otherKey = await finish(stop, aKey("finish"), crew.members[1].id);
    const [p1, p2] = await Promise.all([finish(stop, key), finish(stop, aKey("finish"))]);

    expect(first.alreadyFinished).toBe(false);
    for (const again of [sameKey, otherKey, p1, p2]) expect(again).toEqual({ ...first, alreadyFinished: true });
    expect(await db("invoices").where({ visit_id: stop.visitId })).toHaveLength(1);
    expect(await db("visits").where({ course_id: stop.courseId })).toHaveLength(2);
    expect(await db("email_log").where({ dedupe_key: `visit_report:${stop.visitId}` })).toHaveLength(1);
    expect(await db("audit_log").where({ action: "visit.finish" })).toHaveLength(1);
    expect((await db("visits").where({ id: stop.visitId }).first())).toMatchObject({ status: "done", finish_key: key, finished_by: crew.members[0].id, weather_note: "Cold, calm, 4 °C" });
  });

  it("totals the tally, and returns the application record line", async () => {
    const stop = await aStop(db, crew, { date: DATE, colonies: 4, broodBoxes: (i) => (i === 0 ? 2 : 1) });
    await tallyWholeStop(stop, { skipH3: true });
    const result = await finish(stop);
    // Treated H1 (2 boxes), H2, H4 (1 box each) at 1 g per brood box = 4 g; H3 skipped.
    expect(result).toMatchObject({ treated: 3, skipped: 1, grams: 4, courseComplete: false });
    const [customer, yard] = await Promise.all([db("customers").where({ id: stop.customerId }).first(), db("yards").where({ id: stop.yardId }).first()]);
    expect(result.applicationRecord).toMatchObject({
      visitId: stop.visitId,
      serviceDate: DATE,
      customerName: customer!.name,
      customerAddress: `${customer!.address_line}, Ithaca, NY, 14850`,
      yardName: yard!.name,
      yardAddress: yard!.address,
      lat: Number(yard!.lat),
      lng: -76.4,
      coloniesTreated: 3,
      productName: "Test oxalic acid dihydrate",
      productRegistrationNumber: "EPA Reg. No. 00000-0",
      doseGramsPerBroodBox: 1,
      gramsApplied: 4,
      applicatorName: "Crew North applicator 1",
      applicatorLicence: "NY-C-12345",
      weatherNote: "Cold, calm, 4 °C",
      timeZone: "America/New_York",
    });
    expect(result.applicationRecord?.startedAt).toBeTruthy();
    expect(result.applicationRecord?.finishTime).toMatch(/^\d{1,2}:\d{2}\s[AP]M$/);
  });

  it("needs a tally for every active colony, and the supers confirmed when anything was treated", async () => {
    const stop = await aStop(db, crew, { date: DATE, colonies: 3, rounds: 1 });
    await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: crew.members[0].id, items: ALL_SAFE });
    const skip = (label: string) =>
      recordTally(db, { visitId: stop.visitId, crewId: crew.id, userId: crew.members[0].id, idempotencyKey: aKey("tally"), colonyLabel: label, outcome: "skipped", skipReason: "supers_on", recordedAt: new Date() });
    await skip("H1");
    const error = await refusal(finish(stop));
    expect(error.code).toBe("invalid");
    expect(error.message).toMatch(/H2, H3 are still open/);
    // Every colony skipped for supers on: nothing was treated, so it may finish without the supers confirmed.
    await skip("H2");
    await skip("H3");
    const result = await finish(stop);
    expect(result).toMatchObject({ treated: 0, skipped: 3, grams: 0 });
    // Trip fee $35.00 topped up to the $50.00 minimum, + 8 % tax.
    expect((await db("invoices").where({ id: result.invoiceId! }).first())?.total_cents).toBe(5400);
  });

  it("schedules the next round interval days later, with the yard's colonies", async () => {
    const stop = await aStop(db, crew, { date: DATE, colonies: 4, rounds: 3, intervalDays: 6 });
    await tallyWholeStop(stop);
    const result = await finish(stop);
    expect(result).toMatchObject({ nextVisitDate: addCalendarDays(DATE, 6), nextVisitStatus: "scheduled", nextVisitDeferReason: null, courseComplete: false });
    const next = await db("visits").where({ id: result.nextVisitId! }).first();
    expect(next).toMatchObject({ course_id: stop.courseId, round_number: 2, service_date: "2026-11-16", status: "scheduled", colonies_expected: 4 });
    expect((await db("courses").where({ id: stop.courseId }).first())?.status).toBe("active");
    expect((await db("bookings").where({ id: stop.bookingId }).first())?.status).toBe("confirmed");
  });

  it("defers the next round with a reason when its day is full", async () => {
    const stop = await aStop(db, crew, { date: DATE, colonies: 4, rounds: 3, intervalDays: 7 });
    await db("service_days").insert({ service_date: "2026-11-17", capacity_colonies: 3 });
    await tallyWholeStop(stop);
    const result = await finish(stop);
    expect(result.nextVisitStatus).toBe("deferred");
    expect(result.nextVisitDeferReason).toMatch(/2026-11-17.*room for 3 more colonies and this yard has 4/);
    const next = await db("visits").where({ id: result.nextVisitId! }).first();
    expect(next).toMatchObject({ service_date: "2026-11-17", status: "deferred", defer_reason: result.nextVisitDeferReason });
  });

  it("defers the next round with a reason when its day's crews cannot apply the grams it needs", async () => {
    const stop = await aStop(db, crew, { date: DATE, colonies: 4, rounds: 3, intervalDays: 7 });
    // 3.5 g a day: room for 7 colonies of one nuc box (0.5 g), but this yard's 4 deep
    // single-box colonies need 4 g at 1 g per brood box.
    await db("crews").where({ id: crew.id }).update({ max_dose_grams_per_day: 3.5 });
    await tallyWholeStop(stop);
    const result = await finish(stop);
    expect(result.nextVisitStatus).toBe("deferred");
    expect(result.nextVisitDeferReason).toMatch(/2026-11-17.*can apply 3\.5 g more and this yard needs 4 g/);
    expect(await db("visits").where({ id: result.nextVisitId! }).first()).toMatchObject({ status: "deferred", colonies_expected: 4 });
  });

  it("completes the course and the booking after the last round", async () => {
    const stop = await aStop(db, crew, { date: DATE, colonies: 2, rounds: 3, roundNumber: 3 });
    await tallyWholeStop(stop);
    const result = await finish(stop);
    expect(result).toMatchObject({ courseComplete: true, nextVisitId: null, nextVisitDate: null, nextVisitStatus: null });
    expect((await db("courses").where({ id: stop.courseId }).first())?.status).toBe("complete");
    expect((await db("bookings").where({ id: stop.bookingId }).first())?.status).toBe("completed");
    expect(await db("visits").where({ course_id: stop.courseId })).toHaveLength(1);
  });

  it("invoices the colonies treated from the tally, not the booking, at the prices in settings", async () => {
    const stop = await aStop(db, crew, { date: DATE, colonies: 4, rounds: 3 });
    await tallyWholeStop(stop, { skipH3: true });
    const result = await finish(stop);
    const invoice = await db("invoices").where({ id: result.invoiceId! }).first();
    // 3 treated × $25.00 = $75.00 + $35.00 trip = $110.00; 8 % = $8.80; $118.80.
    expect(invoice).toMatchObject({
      number: `${YEAR}-0001`,
      year: YEAR,
      sequence: 1,
      customer_id: stop.customerId,
      status: "open",
      issued_on: TODAY,
      due_on: addCalendarDays(TODAY, 14),
      subtotal_cents: 11000,
      tax_cents: 880,
      total_cents: 11880,
    });
    expect(result.invoiceNumber).toBe(`${YEAR}-0001`);
    const lines = await db("invoice_lines").where({ invoice_id: invoice!.id }).orderBy("position");
    expect(lines.map((l) => [l.kind, l.quantity, l.unit_cents, l.amount_cents])).toEqual([
      ["colony", 3, 2500, 7500],
      ["trip_fee", 1, 3500, 3500],
    ]);
    expect(lines[0].description).toBe("Oxalic acid vapor treatment, round 1 of 3: 3 colonies × $25.00");
    expect(await db("audit_log").where({ action: "invoice.create" })).toHaveLength(1);
    // Asking again returns the live invoice.
    const again = await db.transaction((trx) => createInvoiceForVisit(trx, { visitId: stop.visitId, issuedOn: TODAY }));
    expect(again).toMatchObject({ invoiceId: result.invoiceId, created: false });
  });

  it("queues the visit report e-mail once, with skips, mite counts, grams and the next round", async () => {
    const stop = await aStop(db, crew, { date: DATE, colonies: 4, rounds: 3, intervalDays: 7 });
    await tallyWholeStop(stop, { skipH3: true });
    await finish(stop);
    await finish(stop);
    const emails = await db("email_log").where({ visit_id: stop.visitId, kind: "visit_report" });
    expect(emails).toHaveLength(1);
    const [email] = emails;
    expect(email).toMatchObject({ to_address: stop.customerEmail, customer_id: stop.customerId, status: "queued" });
    expect(email.subject).toMatch(/^Visit report: Yard \d+, Tue, Nov 10, 2026$/);
    expect(email.text_body).toContain("Colonies treated: 3");
    expect(email.text_body).toContain("Oxalic acid dihydrate applied: 3.00 g");
    expect(email.text_body).toContain("H3: Dead-out (no living colony) — No cluster left");
    // 9 in 300 = 3.0 per 100 (at the November threshold of 3); 21 in 300 = 7.0 (above).
    expect(email.text_body).toContain("H1: 9 mites in 300 bees = 3.0 per 100 bees, at the action threshold (3 per 100 bees)");
    expect(email.text_body).toContain("H2: 21 mites in 300 bees = 7.0 per 100 bees, above the action threshold (3 per 100 bees)");
    expect(email.text_body).toContain("Round 2 is booked for Tue, Nov 17, 2026.");
    expect(email.text_body).toContain("SAFETY WITH OXALIC ACID VAPOR");
    expect(email.text_body).toContain(`/portal/visits/${stop.visitId}`);
  });

  it("marks the run done when its last stop is finished", async () => {
    const a = await aStop(db, crew, { date: DATE, colonies: 1, rounds: 1 });
    const b = await aStop(db, crew, { date: DATE, colonies: 1, rounds: 1 });
    await tallyWholeStop(a);
    await tallyWholeStop(b);
    expect((await finish(a)).runDone).toBe(false);
    expect((await db("runs").where({ id: a.runId }).first())?.status).toBe("in_progress");
    expect((await finish(b)).runDone).toBe(true);
    expect((await db("runs").where({ id: a.runId }).first())?.status).toBe("done");
    // A finish replayed after the run is done still answers with the first result.
    expect((await finish(a)).alreadyFinished).toBe(true);
  });

  it("shows the report to its customer only, once the visit is done", async () => {
    const stop = await aStop(db, crew, { date: DATE, colonies: 4, rounds: 3 });
    const stranger = await aStop(db, crew, { date: DATE, colonies: 1 });
    await tallyWholeStop(stop, { skipH3: true });
    expect(await visitReportForCustomer(db, { visitId: stop.visitId, customerId: stop.customerId })).toBeNull();
    await finish(stop);
    const report = await visitReportForCustomer(db, { visitId: stop.visitId, customerId: stop.customerId });
    expect(report).toMatchObject({ treated: 3, skipped: 1, grams: 3, roundNumber: 1, roundsPlanned: 3, nextRound: { date: "2026-11-17", deferred: false }, productName: "Test oxalic acid dihydrate" });
    expect(report?.colonies.find((c) => c.label === "H1")).toMatchObject({ mitesPer100: 3, threshold: 3, level: "at" });
    expect(await visitReportForCustomer(db, { visitId: stop.visitId, customerId: stranger.customerId })).toBeNull();

    // The business changes product later: the report keeps the one the colonies were treated with.
    const settings = await loadBusinessSettings(db);
    await saveBusinessSettings(db, { ...settings, productName: "Another product", productRegistrationNumber: "OTHER-1" }, owner);
    expect(await visitReportForCustomer(db, { visitId: stop.visitId, customerId: stop.customerId })).toMatchObject({
      productName: "Test oxalic acid dihydrate",
      productRegistrationNumber: "EPA Reg. No. 00000-0",
    });
  });
});

describe("invoice numbers", () => {
  it("are gap-free under 20 concurrent visit finishes: one invoice each, numbers 1..20", async () => {
    const crews = [crew, await aCrew(db, "Crew East"), await aCrew(db, "Crew West"), await aCrew(db, "Crew Hill")];
    const stops: { stop: TestStop; crew: TestCrew }[] = [];
    for (let i = 0; i < 20; i++) {
      const c = crews[i % crews.length];
      stops.push({ stop: await aStop(db, c, { date: DATE, colonies: 2, rounds: 2, intervalDays: 7 }), crew: c });
    }
    for (const { stop, crew: c } of stops) {
      const userId = c.members[0].id;
      await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: c.id, userId, items: ALL_SAFE });
      await confirmSupersOff(db, { visitId: stop.visitId, crewId: c.id, userId, idempotencyKey: aKey("supers") });
      for (const label of stop.labels) {
        await recordTally(db, { visitId: stop.visitId, crewId: c.id, userId, idempotencyKey: aKey("tally"), colonyLabel: label, outcome: "treated", recordedAt: new Date() });
      }
    }
    // Every visit finished at once, each twice (two phones), half of them with the same key.
    const results = await Promise.all(
      stops.flatMap(({ stop, crew: c }, i) => {
        const key = aKey("finish");
        const input = { visitId: stop.visitId, crewId: c.id, userId: c.members[0].id, finishKey: key };
        return [finishVisit(db, input), finishVisit(db, { ...input, userId: c.members[1].id, finishKey: i % 2 === 0 ? key : aKey("finish") })];
      }),
    );
    expect(results.filter((r) => !r.alreadyFinished)).toHaveLength(20);

    const invoices = await db("invoices").orderBy("sequence").select("visit_id", "sequence", "number", "year");
    expect(invoices).toHaveLength(20);
    expect(invoices.map((i) => i.sequence)).toEqual(Array.from({ length: 20 }, (_, i) => i + 1));
    expect(new Set(invoices.map((i) => i.number)).size).toBe(20);
    expect(invoices.every((i) => i.year === YEAR && i.number === `${YEAR}-${String(i.sequence).padStart(4, "0")}`)).toBe(true);
    expect(new Set(invoices.map((i) => i.visit_id))).toEqual(new Set(stops.map((s) => s.stop.visitId)));
    expect((await db("invoice_sequences").where({ year: YEAR }).first())?.last_number).toBe(20);
    // One next round per visit, one report each.
    expect(await db("visits").where({ round_number: 2 })).toHaveLength(20);
    expect(await db("email_log").where({ kind: "visit_report" })).toHaveLength(20);
  });
});
