import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { describeAuditEntry } from "~/domain/audit-descriptions";
import { defaultBusinessSettings } from "~/domain/settings";
import { accountOverview, deleteCustomerAccount } from "~/models/account-data.server";
import { applicationRecords } from "~/models/application-records.server";
import { anonymiseExpiredRecordHolds } from "~/models/record-retention.server";
import { saveBusinessSettings } from "~/models/settings.server";
import { confirmRunSafetyCheck, confirmSupersOff, finishVisit, recordTally } from "~/models/tallies.server";
import { createCustomerAccount } from "~/models/users.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { ALL_SAFE, aCrew, aKey, type TestCrew } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

// A deleted customer's application-record fields (name, address, the places of the
// treatments) are kept for the retention in settings after the last treatment, then the
// worker's sweep anonymises them.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

let crew: TestCrew;
let officeUser: number;

async function setRetention(years: number) {
  await saveBusinessSettings(db, { ...defaultBusinessSettings, minimumPerVisitCents: 0, recordRetentionYears: years }, officeUser);
}

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew Retention");
  const [office] = await db("users").insert({ email: "office.retention@example.test", password_hash: "x", role: "office", name: "Office" }).returning("id");
  officeUser = Number(office.id);
  // Source: US EPA certification rule, records kept ≥ 2 years, as summarised by pesticidestewardship.org
  await setRetention(2);
});

/** Puts the visit on the crew's published run of its day; returns the run id. */
async function onRun(visitId: number) {
  const visit = (await db("visits").where({ id: visitId }).first("service_date"))!;
  let run = await db("runs").where({ crew_id: crew.id, service_date: visit.service_date }).first("id");
  if (!run) [run] = await db("runs").insert({ crew_id: crew.id, service_date: visit.service_date, status: "published", published_at: new Date() }).returning("id");
  const at = new Date(`${visit.service_date}T14:00:00Z`);
  await db("stops").insert({ run_id: run!.id, visit_id: visitId, position: 0, arrive_at: at, start_at: at, leave_at: new Date(at.getTime() + 30 * 60_000) });
  return Number(run!.id);
}

/** A one-round visit on `date` at the yard, done by the crew with every colony `outcome`. */
async function aFinishedVisit(customerId: number, yardId: number, date: string, outcome: "treated" | "skipped") {
  const labels = (await db("colonies").where({ yard_id: yardId }).orderBy("id").select("label")).map((c) => c.label);
  const [booking] = await db("bookings").insert({ customer_id: customerId, yard_id: yardId, service_date: date, colonies: labels.length, status: "confirmed" }).returning("id");
  const [course] = await db("courses").insert({ yard_id: yardId, booking_id: booking.id, brood_status: "broodless", rounds_planned: 1, interval_days: 7 }).returning("id");
  const [visit] = await db("visits").insert({ course_id: course.id, yard_id: yardId, round_number: 1, service_date: date, colonies_expected: labels.length }).returning("id");
  const visitId = Number(visit.id);
  const runId = await onRun(visitId);
  const userId = crew.members[0].id;
  await confirmRunSafetyCheck(db, { runId, crewId: crew.id, userId, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId, crewId: crew.id, userId, idempotencyKey: aKey("supers") });
  for (const label of labels) {
    await recordTally(db, {
      visitId,
      crewId: crew.id,
      userId,
      idempotencyKey: aKey("tally"),
      colonyLabel: label,
      outcome,
      skipReason: outcome === "skipped" ? "dead_out" : null,
      recordedAt: new Date(),
    });
  }
  await finishVisit(db, { visitId, crewId: crew.id, userId, finishKey: aKey("finish") });
  return visitId;
}

/** A customer with a sign-in, a street address and two yards of two colonies. */
async function aCustomer(first: string, street: string, lat: number, lng: number) {
  const email = `${first.toLowerCase()}.${Math.random().toString(36).slice(2, 8)}@example.test`;
  const name = `${first} Hollowell`;
  const userId = Number(await createCustomerAccount(db, { name, email, password: `${first} keeps bees since 1998`, phone: "607-555-0142" }));
  const customerId = Number((await db("customers").where({ user_id: userId }).first("id"))!.id);
  await db("customers").where({ id: customerId }).update({ address_line: street, city: "Dryden", region: "NY", postal_code: "13053", notes: `${first} prefers calls after 5 pm` });
  const yardIds: number[] = [];
  for (const [i, yardName] of [`${first}'s Orchard`, `${first}'s Meadow`].entries()) {
    const [row] = await db("yards")
      .insert({
        customer_id: customerId,
        name: yardName,
        lat: lat + i * 0.012637,
        lng: lng - i * 0.013495,
        address: `${street}, Dryden, NY 13053`,
        access_notes: `Gate code 44${i}7`,
        colony_count: 2,
        brood_status: "broodless",
      })
      .returning("id");
    await db("colonies").insert([1, 2].map((n) => ({ yard_id: row.id, label: `H${n}`, brood_boxes: 1, brood_status: "broodless" })));
    yardIds.push(Number(row.id));
  }
  return { userId, customerId, email, name, street, yardIds, yardNames: [`${first}'s Orchard`, `${first}'s Meadow`] };
}

type Customer = Awaited<ReturnType<typeof aCustomer>>;

const customerRow = (c: Customer) => db("customers").where({ id: c.customerId }).first();
const yardRows = (c: Customer) => db("yards").where({ customer_id: c.customerId }).orderBy("id").select("id", "name", "address", "lat", "lng", "access_notes", "archived_at");
const recordsOf = async (c: Customer) => (await applicationRecords(db, { from: "2026-01-01", to: "2026-12-31", crewId: null, customerId: c.customerId })).rows;

/** Wren: treated on 2026-09-15 (orchard) and 2026-10-06 (meadow), nothing treated on 2026-10-20. */
async function wrenWithTreatments() {
  const wren = await aCustomer("Wren", "17 Larch Lane", 42.491234, -76.297654);
  await aFinishedVisit(wren.customerId, wren.yardIds[0], "2026-09-15", "treated");
  await aFinishedVisit(wren.customerId, wren.yardIds[1], "2026-10-06", "treated");
  // A later finished visit where every colony was skipped applied no product: not a treatment.
  await aFinishedVisit(wren.customerId, wren.yardIds[0], "2026-10-20", "skipped");
  return wren;
}

describe("deleting an account with treated visits", () => {
  it("keeps the record fields until the last treatment day plus 2 years and removes the rest at once", async () => {
    const wren = await wrenWithTreatments();
    const yardsBefore = await yardRows(wren);

    // The account page says it before the customer confirms.
    expect((await accountOverview(db, wren.customerId, "2026-12-04")).recordsKeptUntil).toBe("2028-10-06");

    const result = await deleteCustomerAccount(db, { customerId: wren.customerId, actorUserId: wren.userId });
    expect(result.keptUntil).toBe("2028-10-06");
    expect(result.yardsAnonymised).toBe(0);

    // Kept: name and address; gone: contact details and notes.
    const customer = (await customerRow(wren))!;
    expect(customer).toMatchObject({ name: wren.name, address_line: wren.street, postal_code: "13053", city: "Dryden", region: "NY" });
    expect(customer).toMatchObject({ email: "", phone: null, notes: null, stripe_customer_id: null, records_kept_until: "2028-10-06" });
    expect(customer.anonymised_at).not.toBeNull();

    // Yards: name, address and exact position kept; access notes gone, archived.
    const yards = await yardRows(wren);
    expect(yards.map((y) => [y.name, y.address, Number(y.lat), Number(y.lng)])).toEqual(yardsBefore.map((y) => [y.name, y.address, Number(y.lat), Number(y.lng)]));
    expect(yards.map((y) => y.name)).toEqual(wren.yardNames);
    for (const y of yards) {
      expect(y.access_notes).toBe("");
      expect(y.archived_at).not.toBeNull();
    }

    // The sign-in is stripped at once.
    const user = (await db("users").where({ id: wren.userId }).first())!;
    expect(user.email).not.toBe(wren.email);
    expect(user.name).toBe(`Deleted customer ${wren.customerId}`);

    // The audit row says until when.
    const audit = (await db("audit_log").where({ action: "customer.delete" }).first())!;
    expect((audit.after as { keptUntil: string | null }).keptUntil).toBe("2028-10-06");

    // The application records still name the customer and the places during the period.
    const records = await recordsOf(wren);
    expect(records).toHaveLength(3);
    for (const r of records) {
      expect(r.customerName).toBe(wren.name);
      expect(r.customerAddress).toContain(wren.street);
      expect(wren.yardNames).toContain(r.yardName);
      expect(r.yardAddress).toContain(wren.street);
    }
  });

  it("keeps them for 5 years when the business's retention is 5", async () => {
    await setRetention(5);
    const wren = await wrenWithTreatments();
    expect((await accountOverview(db, wren.customerId, "2026-12-04")).recordsKeptUntil).toBe("2031-10-06");
    const result = await deleteCustomerAccount(db, { customerId: wren.customerId, actorUserId: wren.userId });
    expect(result.keptUntil).toBe("2031-10-06");
    expect((await customerRow(wren))!).toMatchObject({ name: wren.name, records_kept_until: "2031-10-06" });
  });
});

describe("the sweep of expired record holds", () => {
  it("anonymises the record fields the day after the date, audits it, and a second sweep changes nothing", async () => {
    const wren = await wrenWithTreatments();
    const otto = await aCustomer("Otto", "88 Quarry Spur", 42.387612, -76.553318);
    await aFinishedVisit(otto.customerId, otto.yardIds[0], "2026-11-02", "treated");
    await deleteCustomerAccount(db, { customerId: wren.customerId, actorUserId: wren.userId });
    await deleteCustomerAccount(db, { customerId: otto.customerId, actorUserId: otto.userId });
    expect((await customerRow(otto))!.records_kept_until).toBe("2028-11-02");

    // On the last day of the period, nothing yet.
    const onTheDay = await anonymiseExpiredRecordHolds(db, "2028-10-06");
    expect(onTheDay).toEqual({ anonymised: [], failed: [] });
    expect((await customerRow(wren))!).toMatchObject({ name: wren.name, records_kept_until: "2028-10-06" });

    // The day after: Wren's record fields go; Otto's period is not over.
    const ottoBefore = { customer: await customerRow(otto), yards: await yardRows(otto) };
    const swept = await anonymiseExpiredRecordHolds(db, "2028-10-07");
    expect(swept).toEqual({ anonymised: [wren.customerId], failed: [] });

    const customer = (await customerRow(wren))!;
    expect(customer).toMatchObject({ name: `Deleted customer ${wren.customerId}`, address_line: null, postal_code: null, city: "Dryden", region: "NY", records_kept_until: null });
    const yards = await yardRows(wren);
    expect(yards.map((y) => y.name)).toEqual(yards.map((y) => `Yard ${y.id}`));
    expect(yards.map((y) => y.address)).toEqual(["Dryden, NY", "Dryden, NY"]);
    expect(yards.map((y) => Number(y.lat))).toEqual([42.49, 42.5]);
    expect(yards.map((y) => Number(y.lng))).toEqual([-76.3, -76.31]);

    // The records now read as the deleted customer, and so do the stored finish results.
    const records = await recordsOf(wren);
    expect(records).toHaveLength(3);
    for (const r of records) {
      expect(r.customerName).toBe(`Deleted customer ${wren.customerId}`);
      expect(r.customerAddress).toBe("Dryden, NY");
      expect(r.yardName).toMatch(/^Yard \d+$/);
    }
    const quoted = JSON.stringify([await db("applied_changes").where({ kind: "finish" }).select("result"), await db("audit_log").where({ action: "visit.finish" }).select("after")]);
    for (const personal of [wren.name, wren.street, ...wren.yardNames, "42.491234", "-76.297654"]) expect(quoted).not.toContain(personal);
    expect(quoted).toContain(otto.name);

    // One audit row, by the system, with the date the hold ran to.
    const audit = await db("audit_log").where({ action: "customer.records_anonymised" });
    expect(audit).toHaveLength(1);
    expect(audit[0]).toMatchObject({ actor_user_id: null, entity_type: "customer", entity_id: String(wren.customerId) });
    expect(audit[0].before).toEqual({ keptUntil: "2028-10-06" });
    expect(describeAuditEntry({ action: "customer.records_anonymised", entityType: "customer", entityId: String(wren.customerId), before: audit[0].before, after: audit[0].after })).toBe(
      "Removed the deleted customer's name, address and treatment places from the application records, kept until Fri, Oct 6, 2028",
    );

    // Otto: untouched.
    expect(await customerRow(otto)).toEqual(ottoBefore.customer);
    expect(await yardRows(otto)).toEqual(ottoBefore.yards);

    // Sweeping again the same day, or later before Otto's date, changes nothing.
    const state = async () => ({ customers: await db("customers").orderBy("id"), yards: await db("yards").orderBy("id"), audit: await db("audit_log").orderBy("id") });
    const after = await state();
    expect(await anonymiseExpiredRecordHolds(db, "2028-10-07")).toEqual({ anonymised: [], failed: [] });
    expect(await anonymiseExpiredRecordHolds(db, "2028-11-02")).toEqual({ anonymised: [], failed: [] });
    expect(await state()).toEqual(after);
  });

  it("refuses a day that is not YYYY-MM-DD", async () => {
    await expect(anonymiseExpiredRecordHolds(db, "07/10/2028")).rejects.toThrow(RangeError);
  });
});

describe("deleting an account without treated visits", () => {
  it("anonymises the record fields at once and keeps no date", async () => {
    const robin = await aCustomer("Robin", "5 Kettle Row", 42.45321, -76.41234);
    // Finished, but every colony skipped: no product was applied.
    await aFinishedVisit(robin.customerId, robin.yardIds[0], "2026-10-06", "skipped");
    expect((await accountOverview(db, robin.customerId, "2026-12-04")).recordsKeptUntil).toBeNull();

    const result = await deleteCustomerAccount(db, { customerId: robin.customerId, actorUserId: robin.userId });
    expect(result.keptUntil).toBeNull();
    expect(result.yardsAnonymised).toBe(2);
    expect((await customerRow(robin))!).toMatchObject({ name: `Deleted customer ${robin.customerId}`, address_line: null, postal_code: null, records_kept_until: null });
    const yards = await yardRows(robin);
    expect(yards.map((y) => y.name)).toEqual(yards.map((y) => `Yard ${y.id}`));
    expect(yards.map((y) => [y.address, Number(y.lat), Number(y.lng)])).toEqual([
      ["Dryden, NY", 42.45, -76.41],
      ["Dryden, NY", 42.47, -76.43],
    ]);
    const audit = (await db("audit_log").where({ action: "customer.delete" }).first())!;
    expect((audit.after as { keptUntil: string | null }).keptUntil).toBeNull();
    expect((await recordsOf(robin)).map((r) => r.customerName)).toEqual([`Deleted customer ${robin.customerId}`]);

    // Nothing for the sweep to do.
    expect(await anonymiseExpiredRecordHolds(db, "2099-01-01")).toEqual({ anonymised: [], failed: [] });
    expect(await db("audit_log").where({ action: "customer.records_anonymised" })).toEqual([]);
  });
});

describe("deleting an account whose records are already past their keeping date", () => {
  it("anonymises the record fields at once, as the sweep would the next day", async () => {
    const ash = await aCustomer("Ash", "9 Quarry Road", 42.46112, -76.35521);
    // Treated in October 2022: with the 2-year retention (the default) kept until 6 October 2024.
    await aFinishedVisit(ash.customerId, ash.yardIds[0], "2022-10-06", "treated");
    expect((await accountOverview(db, ash.customerId, "2024-10-06")).recordsKeptUntil).toBe("2024-10-06"); // the last day kept
    expect((await accountOverview(db, ash.customerId, "2024-10-07")).recordsKeptUntil).toBeNull(); // already past

    const result = await deleteCustomerAccount(db, { customerId: ash.customerId, actorUserId: ash.userId });
    expect(result.keptUntil).toBeNull();
    expect(result.yardsAnonymised).toBe(2);
    expect((await customerRow(ash))!).toMatchObject({ name: `Deleted customer ${ash.customerId}`, address_line: null, records_kept_until: null });
    expect((await yardRows(ash)).map((y) => y.address)).toEqual(["Dryden, NY", "Dryden, NY"]);
  });
});
