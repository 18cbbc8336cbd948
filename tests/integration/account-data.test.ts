import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings, type BusinessSettings } from "~/domain/settings";
import { AccountDeletionRefused, deleteCustomerAccount, exportCustomerData, townOfAddress } from "~/models/account-data.server";
import { anonymiseExpiredRecordHolds } from "~/models/record-retention.server";
import { storeYardPhoto } from "~/models/attachments.server";
import { bookYards } from "~/models/bookings.server";
import { roomBetween } from "~/models/capacity.server";
import { recordOfficePayment, refundPayment } from "~/models/payments.server";
import { loadBusinessSettings, saveBusinessSettings } from "~/models/settings.server";
import { confirmRunSafetyCheck, confirmSupersOff, finishVisit, recordTally } from "~/models/tallies.server";
import { createCustomerAccount, findSessionUser } from "~/models/users.server";
import { action as accountAction } from "~/routes/portal/account";
import { loader as exportLoader } from "~/routes/portal/account-export";
import { authenticator, SignInError } from "~/services/auth.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { sessionStorage } from "~/services/session.server";
import { ALL_SAFE, aCrew, aKey, type TestCrew } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const PNG = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 1, 2, 3, 4]);
let crew: TestCrew;
let officeUser: number;
let settings: BusinessSettings;
let today: string;

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew Account");
  const [office] = await db("users").insert({ email: "office@example.test", password_hash: "x", role: "office", name: "Office" }).returning("id");
  officeUser = Number(office.id);
  await saveBusinessSettings(db, { ...defaultBusinessSettings, pricePerColonyCents: 2500, tripFeeCents: 3500, minimumPerVisitCents: 0, taxRateBasisPoints: 800 }, officeUser);
  settings = await loadBusinessSettings(db);
  today = dateInZone(new Date(), settings.timeZone);
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

/** The crew's round at a visit (safety, supers, a tally per colony with counts on H1 and H2), finished. */
async function doRound(visitId: number, labels: string[]) {
  const runId = await onRun(visitId);
  const userId = crew.members[0].id;
  await confirmRunSafetyCheck(db, { runId, crewId: crew.id, userId, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId, crewId: crew.id, userId, idempotencyKey: aKey("supers") });
  for (const [i, label] of labels.entries()) {
    await recordTally(db, {
      visitId,
      crewId: crew.id,
      userId,
      idempotencyKey: aKey("tally"),
      colonyLabel: label,
      outcome: "treated",
      mites: i < 2 ? 7 + i * 5 : null,
      beesSampled: i < 2 ? 300 : null,
      notes: i === 0 ? "Strong colony" : null,
      recordedAt: new Date(),
    });
  }
  return finishVisit(db, { visitId, crewId: crew.id, userId, finishKey: aKey("finish") });
}

type Person = Awaited<ReturnType<typeof aCustomerWithHistory>>;

/**
 * A customer with everything the export and the deletion touch: a sign-in, address, notes,
 * two yards (access notes, colonies, a photo), a finished round with tallies and its invoice,
 * a payment and a refund, the next round still open, and a booking ahead that is on a run.
 */
async function aCustomerWithHistory(tag: { first: string; last: string; street: string; yard: string; gate: string; photo: string; dayAhead: number; lat: number; lng: number }) {
  const email = `${tag.first.toLowerCase()}.${Math.random().toString(36).slice(2, 8)}@example.test`;
  const password = `${tag.first} keeps bees since 1998`;
  const name = `${tag.first} ${tag.last}`;
  const phone = `607-555-0${100 + tag.dayAhead}`;
  const userId = Number(await createCustomerAccount(db, { name, email, password, phone }));
  const customerId = Number((await db("customers").where({ user_id: userId }).first("id"))!.id);
  await db("customers").where({ id: customerId }).update({ address_line: `${tag.street}`, city: "Dryden", region: "NY", postal_code: "13053", notes: `${tag.first} prefers calls after 5 pm` });

  const yard = async (yardName: string, colonies: number, lat: number, lng: number) => {
    const [row] = await db("yards")
      .insert({ customer_id: customerId, name: yardName, lat, lng, address: `${tag.street}, Dryden, NY 13053`, access_notes: `Gate code ${tag.gate}, key under the blue pot`, colony_count: colonies, brood_status: "brood" })
      .returning("id");
    await db("colonies").insert(Array.from({ length: colonies }, (_, i) => ({ yard_id: row.id, label: `H${i + 1}`, brood_boxes: 1, brood_status: "brood", notes: i === 0 ? `${tag.first}'s favourite` : null })));
    return Number(row.id);
  };
  const home = await yard(`${tag.yard} Orchard`, 3, tag.lat, tag.lng);
  const meadow = await yard(`${tag.yard} Meadow`, 2, tag.lat + 0.012637, tag.lng - 0.013495);
  const photoId = await storeYardPhoto(db, { yardId: home, name: tag.photo, bytes: PNG, uploadedBy: userId });

  // A finished first round in October (course of 2 rounds), its invoice, a cheque and a refund.
  const [booking] = await db("bookings").insert({ customer_id: customerId, yard_id: home, service_date: "2026-10-06", colonies: 3, status: "confirmed", notes: `${tag.first} says: the dog is friendly` }).returning("id");
  const [course] = await db("courses").insert({ yard_id: home, booking_id: booking.id, brood_status: "brood", rounds_planned: 2, interval_days: 7 }).returning("id");
  const [visit] = await db("visits").insert({ course_id: course.id, yard_id: home, round_number: 1, service_date: "2026-10-06", colonies_expected: 3 }).returning("id");
  const finished = await doRound(Number(visit.id), ["H1", "H2", "H3"]);
  const invoiceId = finished.invoiceId!;
  const payment = await recordOfficePayment(db, { invoiceId, amountCents: 5000, method: "cheque", reference: `Cheque ${tag.dayAhead}01`, actorUserId: officeUser });
  await refundPayment(db, { paymentId: payment.paymentId, amountCents: 1200, reason: "Trip fee waived", actorUserId: officeUser });

  // A booking ahead for the meadow, made through the booking model, routed on a run.
  const serviceDate = addCalendarDays(today, tag.dayAhead);
  const booked = await bookYards(db, { customerId, userId, yardIds: [meadow], serviceDate, timePreference: "any", notes: `${tag.first}: ring the bell twice` });
  const futureVisitId = booked.visitIds[0];
  const futureRunId = await onRun(futureVisitId);

  return {
    userId,
    customerId,
    email,
    password,
    name,
    phone,
    street: tag.street,
    gate: tag.gate,
    photo: tag.photo,
    yardNames: [`${tag.yard} Orchard`, `${tag.yard} Meadow`],
    yards: { home, meadow },
    photoId,
    doneVisitId: Number(visit.id),
    nextRoundVisitId: finished.nextVisitId!,
    futureVisitId,
    futureRunId,
    serviceDate,
    invoiceId,
  };
}

const WREN = { first: "Wren", last: "Alderley", street: "17 Larch Lane", yard: "Wrenfield", gate: "4417", photo: "wren-hive-row.png", dayAhead: 20, lat: 42.491234, lng: -76.297654 };
const OTTO = { first: "Otto", last: "Birchwood", street: "88 Quarry Spur", yard: "Ottersby", gate: "9902", photo: "otto-stand.png", dayAhead: 21, lat: 42.387612, lng: -76.553318 };

async function cookieFor(userId: number) {
  const session = await sessionStorage().getSession();
  session.set("userId", String(userId));
  return (await sessionStorage().commitSession(session)).split(";")[0];
}

function deletionRequest(cookie: string, fields: Record<string, string>) {
  return new Request("http://127.0.0.1/portal/account", {
    method: "POST",
    headers: { Cookie: cookie, "Content-Type": "application/x-www-form-urlencoded", "X-Forwarded-For": "198.51.100.40" },
    body: new URLSearchParams(fields),
  });
}

type ActionData = { data: { errors: Record<string, string> }; init: { status: number } };

async function ids(sql: string, bindings: readonly number[]): Promise<number[]> {
  const { rows } = await db.raw<{ rows: { id: number }[] }>(sql, bindings);
  return rows.map((r) => Number(r.id)).sort((a, b) => a - b);
}

/** Which application tables (but `except`) hold any of `needles` in any row: [table, needle] pairs. */
async function tablesHolding(needles: string[], except: string[] = []): Promise<[string, string][]> {
  const { rows } = await db.raw<{ rows: { tablename: string }[] }>("select tablename from pg_tables where schemaname = 'public' and tablename not like 'knex_migrations%'");
  const found: [string, string][] = [];
  for (const { tablename } of rows) {
    if (except.includes(tablename)) continue;
    const text = JSON.stringify(await db(tablename).select("*"));
    for (const needle of needles) if (text.includes(needle)) found.push([tablename, needle]);
  }
  return found;
}

describe("the customer's data export", () => {
  it("holds every row about the customer and none of another customer's", async () => {
    const wren = await aCustomerWithHistory(WREN);
    const otto = await aCustomerWithHistory(OTTO);
    const data = await exportCustomerData(db, wren.customerId);

    expect(data.profile).toMatchObject({ customerId: wren.customerId, name: wren.name, email: wren.email, phone: wren.phone, addressLine: wren.street, postalCode: "13053" });
    expect(data.profile.signIn).toMatchObject({ email: wren.email, role: "customer" });
    expect(data.yards.map((y) => y.name).sort()).toEqual([...wren.yardNames].sort());
    expect(data.yards.every((y) => y.accessNotes.includes(wren.gate))).toBe(true);

    const sql = {
      bookings: await ids("select id from bookings where customer_id = ?", [wren.customerId]),
      visits: await ids("select v.id from visits v join yards y on y.id = v.yard_id where y.customer_id = ?", [wren.customerId]),
      tallies: await ids("select t.id from tallies t join visits v on v.id = t.visit_id join yards y on y.id = v.yard_id where y.customer_id = ?", [wren.customerId]),
      invoices: await ids("select id from invoices where customer_id = ?", [wren.customerId]),
      payments: await ids("select p.id from payments p join invoices i on i.id = p.invoice_id where i.customer_id = ?", [wren.customerId]),
      refunds: await ids("select r.id from refunds r join payments p on p.id = r.payment_id join invoices i on i.id = p.invoice_id where i.customer_id = ?", [wren.customerId]),
      emails: await ids("select id from email_log where customer_id = ?", [wren.customerId]),
      photos: await ids("select a.id from attachments a join yards y on y.id = a.yard_id where y.customer_id = ?", [wren.customerId]),
    };
    const sorted = (rows: { id: number }[]) => rows.map((r) => r.id).sort((a, b) => a - b);
    expect(sorted(data.bookings)).toEqual(sql.bookings);
    expect(sorted(data.visits)).toEqual(sql.visits);
    expect(sorted(data.tallies)).toEqual(sql.tallies);
    expect(sorted(data.invoices)).toEqual(sql.invoices);
    expect(sorted(data.payments)).toEqual(sql.payments);
    expect(sorted(data.refunds)).toEqual(sql.refunds);
    expect(sorted(data.emails)).toEqual(sql.emails);
    expect(sorted(data.photos)).toEqual(sql.photos);
    for (const list of Object.values(sql)) expect(list.length).toBeGreaterThan(0);

    // Invoice lines with their amounts; tallies with the crew's counts; photos by name only.
    const lines = await db("invoice_lines").where({ invoice_id: wren.invoiceId }).orderBy("position").select("amount_cents");
    expect(data.invoices.find((i) => i.id === wren.invoiceId)!.lines.map((l) => l.amountCents)).toEqual(lines.map((l) => l.amount_cents));
    expect(data.tallies.filter((t) => t.mites !== null).map((t) => [t.mites, t.beesSampled])).toEqual([
      [7, 300],
      [12, 300],
    ]);
    expect(data.photos).toEqual([expect.objectContaining({ id: wren.photoId, name: wren.photo, contentType: "image/png", byteSize: PNG.byteLength })]);
    expect(data.emails.every((e) => e.subject.length > 0 && e.kind.length > 0 && e.queuedAt)).toBe(true);

    const text = JSON.stringify(data);
    for (const foreign of [otto.email, otto.name, otto.street, otto.gate, otto.photo, ...otto.yardNames]) expect(text).not.toContain(foreign);
    expect(text).not.toMatch(/password|\$2[aby]\$/);
    expect(text).not.toContain("contentBase64");
  });

  it("downloads as a dated JSON attachment for the signed-in customer", async () => {
    const wren = await aCustomerWithHistory(WREN);
    const otto = await aCustomerWithHistory(OTTO);
    const response = (await exportLoader({
      request: new Request("http://127.0.0.1/portal/account/export", { headers: { Cookie: await cookieFor(otto.userId) } }),
      params: {},
      context: {},
    } as never)) as Response;
    expect(response.headers.get("Content-Type")).toMatch(/^application\/json/);
    expect(response.headers.get("Content-Disposition")).toBe(`attachment; filename="varroute-my-data-${today}.json"`);
    const body = await response.text();
    expect(JSON.parse(body).profile.customerId).toBe(otto.customerId);
    expect(body).not.toContain(wren.email);
  });
});

describe("deleting the account", () => {
  it("removes the personal data, keeps the money and treatment records, cancels what is booked, and ends the sign-in", async () => {
    const wren = await aCustomerWithHistory(WREN);
    const otto = await aCustomerWithHistory(OTTO);
    const cookie = await cookieFor(wren.userId);

    // Kept records, as they are before.
    const snapshot = async () => ({
      invoices: await db("invoices").where({ customer_id: wren.customerId }).orderBy("id").select("id", "number", "status", "subtotal_cents", "tax_cents", "total_cents", "issued_on"),
      lines: await db("invoice_lines").whereIn("invoice_id", db("invoices").where({ customer_id: wren.customerId }).select("id")).orderBy("id").select("id", "kind", "quantity", "unit_cents", "amount_cents"),
      payments: await db("payments").whereIn("invoice_id", db("invoices").where({ customer_id: wren.customerId }).select("id")).orderBy("id").select("id", "amount_cents", "method"),
      refunds: await db("refunds").orderBy("id").select("id", "payment_id", "amount_cents"),
      doneVisits: await db("visits").where({ id: wren.doneVisitId }).select("id", "status", "service_date", "colonies_expected", "finished_at"),
      tallies: await db("tallies").where({ visit_id: wren.doneVisitId }).orderBy("id").select("id", "colony_label", "outcome", "dose_grams", "mites", "bees_sampled"),
    });
    const before = await snapshot();
    const ottoBefore = {
      customer: await db("customers").where({ id: otto.customerId }).first(),
      yards: await db("yards").where({ customer_id: otto.customerId }).orderBy("id"),
      photos: await db("attachments").where({ yard_id: otto.yards.home }).select("id"),
      visit: await db("visits").where({ id: otto.futureVisitId }).first("status"),
    };
    const roomBefore = (await roomBetween(db, settings, wren.serviceDate, wren.serviceDate))[0].booked;
    const runVersionBefore = (await db("runs").where({ id: wren.futureRunId }).first("version"))!.version;

    // Refused at the field: a wrong password, and a wrong confirmation word; nothing changes.
    const wrong = (await accountAction({ request: deletionRequest(cookie, { password: "not it at all", confirmation: "delete" }), params: {}, context: {} } as never)) as unknown as ActionData;
    expect(wrong.init.status).toBe(400);
    expect(wrong.data.errors.password).toMatch(/not the password/);
    const word = (await accountAction({ request: deletionRequest(cookie, { password: wren.password, confirmation: "yes" }), params: {}, context: {} } as never)) as unknown as ActionData;
    expect(word.data.errors.confirmation).toMatch(/DELETE/);
    expect((await db("customers").where({ id: wren.customerId }).first())!.anonymised_at).toBeNull();

    // Deleted: the session is destroyed and the customer lands on the home page.
    const thrown = await Promise.resolve(accountAction({ request: deletionRequest(cookie, { password: wren.password, confirmation: " delete " }), params: {}, context: {} } as never)).catch((e: unknown) => e);
    expect(thrown).toBeInstanceOf(Response);
    const redirect = thrown as Response;
    expect(redirect.status).toBe(302);
    // Wren's colonies were treated on 2026-10-06: the application-record fields are kept 2 years.
    // Source: US EPA certification rule, records kept ≥ 2 years, as summarised by pesticidestewardship.org
    expect(redirect.headers.get("Location")).toBe("/?accountDeleted=1&recordsKeptUntil=2028-10-06");
    expect(redirect.headers.get("Set-Cookie")).toMatch(/__varroute=;.*(Max-Age=0|Expires=Thu, 01 Jan 1970)/);

    // Until then the customer's name and street address and the yards' names and addresses stay
    // (record-retention.test.ts covers the hold); the sweep the day after removes them.
    expect((await db("customers").where({ id: wren.customerId }).first())!).toMatchObject({ name: wren.name, address_line: wren.street, records_kept_until: "2028-10-06" });
    expect((await anonymiseExpiredRecordHolds(db, "2028-10-07")).anonymised).toEqual([wren.customerId]);

    // The customer row: no name or contact details.
    const customer = (await db("customers").where({ id: wren.customerId }).first())!;
    expect(customer).toMatchObject({ name: `Deleted customer ${wren.customerId}`, email: "", phone: null, address_line: null, postal_code: null, notes: null, stripe_customer_id: null, records_kept_until: null });
    expect(customer.anonymised_at).not.toBeNull();

    // Yards: names, addresses and access notes gone, location coarse, archived; photos deleted.
    for (const yard of await db("yards").where({ customer_id: wren.customerId })) {
      expect(yard.name).toBe(`Yard ${yard.id}`);
      expect(yard.access_notes).toBe("");
      expect(yard.address).toBe("Dryden, NY");
      expect(Math.round(Number(yard.lat) * 100)).toBeCloseTo(Number(yard.lat) * 100, 6);
      expect(Math.round(Number(yard.lng) * 100)).toBeCloseTo(Number(yard.lng) * 100, 6);
      expect(yard.archived_at).not.toBeNull();
    }
    expect(Number((await db("yards").where({ id: wren.yards.home }).first("lat"))!.lat)).toBe(42.49);
    expect(Number((await db("yards").where({ id: wren.yards.home }).first("lng"))!.lng)).toBe(-76.3);
    expect(await db("attachments").whereIn("yard_id", Object.values(wren.yards))).toEqual([]);

    // Money and treatment records: unchanged, amounts and counts included.
    expect(await snapshot()).toEqual(before);
    expect(before.tallies.length).toBe(3);
    expect(before.payments.length).toBe(1);

    // What was booked is cancelled: off its run, the day's room freed, no e-mail about it.
    expect((await db("visits").where({ id: wren.futureVisitId }).first("status"))!.status).toBe("cancelled");
    expect((await db("visits").where({ id: wren.nextRoundVisitId }).first("status"))!.status).toBe("cancelled");
    expect(await db("stops").where({ visit_id: wren.futureVisitId })).toEqual([]);
    expect((await db("runs").where({ id: wren.futureRunId }).first("version"))!.version).toBe(runVersionBefore + 1);
    expect((await roomBetween(db, settings, wren.serviceDate, wren.serviceDate))[0].booked).toBe(roomBefore - 2);
    expect(await db("bookings").where({ customer_id: wren.customerId }).whereIn("status", ["requested", "confirmed"])).toEqual([]);
    expect(await db("email_log").whereIn("kind", ["booking_cancelled"]).where({ visit_id: wren.futureVisitId })).toEqual([]);

    // E-mails to them: no address or content left, and nothing still waiting to be sent.
    const emails = await db("email_log").where({ customer_id: wren.customerId });
    expect(emails.length).toBeGreaterThan(0);
    for (const e of emails) expect(e).toMatchObject({ to_address: "", html: null, text_body: null, attachments: null });
    expect(emails.filter((e) => e.status !== "sent" && e.next_attempt_at !== null)).toEqual([]);

    // The audit row, by the customer's own user, with no personal data in it.
    const audit = await db("audit_log").where({ action: "customer.delete" });
    expect(audit).toHaveLength(1);
    expect(audit[0]).toMatchObject({ actor_user_id: wren.userId, entity_type: "customer", entity_id: String(wren.customerId) });
    const auditText = JSON.stringify(audit[0]);
    for (const personal of [wren.name, wren.email, wren.phone, wren.street, wren.gate, wren.photo, ...wren.yardNames]) expect(auditText).not.toContain(personal);

    // Nowhere in the database any more: name, e-mail, phone, street, gate code, photo name,
    // booking notes. The yard's name stays only on the kept invoice's trip-fee line.
    expect(await tablesHolding([wren.name, wren.email, wren.phone, wren.street, wren.gate, wren.photo, "Wren: ring the bell", "Wren says", "Wren prefers", "Wren's favourite"])).toEqual([]);
    expect(await tablesHolding(wren.yardNames, ["invoice_lines"])).toEqual([]);
    expect(await tablesHolding(["42.491234", "-76.297654"])).toEqual([]);

    // The sign-in no longer works: not by the old password, not by an old session.
    expect(await findSessionUser(db, String(wren.userId))).toBeNull();
    const signIn = await authenticator
      .authenticate(
        "form",
        new Request("http://127.0.0.1/sign-in", {
          method: "POST",
          headers: { "Content-Type": "application/x-www-form-urlencoded", "X-Forwarded-For": "198.51.100.41" },
          body: new URLSearchParams({ email: wren.email, password: wren.password }),
        }),
      )
      .catch((e: unknown) => e);
    expect(signIn).toBeInstanceOf(SignInError);
    const stale = await Promise.resolve(exportLoader({ request: new Request("http://127.0.0.1/portal/account/export", { headers: { Cookie: cookie } }), params: {}, context: {} } as never)).catch((e: unknown) => e);
    expect(stale).toBeInstanceOf(Response);
    expect((stale as Response).headers.get("Location")).toMatch(/^\/sign-in/);

    // A second deletion is refused, clearly.
    const again = await deleteCustomerAccount(db, { customerId: wren.customerId, actorUserId: wren.userId }).catch((e: unknown) => e);
    expect(again).toBeInstanceOf(AccountDeletionRefused);
    expect((again as AccountDeletionRefused).reason).toBe("already_deleted");
    expect((again as AccountDeletionRefused).message).toMatch(/already been deleted/);
    expect(await db("audit_log").where({ action: "customer.delete" })).toHaveLength(1);

    // The other customer: untouched.
    expect(await db("customers").where({ id: otto.customerId }).first()).toEqual(ottoBefore.customer);
    expect(await db("yards").where({ customer_id: otto.customerId }).orderBy("id")).toEqual(ottoBefore.yards);
    expect(await db("attachments").where({ yard_id: otto.yards.home }).select("id")).toEqual(ottoBefore.photos);
    expect(await db("visits").where({ id: otto.futureVisitId }).first("status")).toEqual(ottoBefore.visit);
  });

  it("is refused while a crew is treating the customer's colonies, and nothing changes", async () => {
    const wren = await aCustomerWithHistory(WREN);
    // The crew starts on the booked meadow visit: a tally puts it in progress.
    await confirmRunSafetyCheck(db, { runId: wren.futureRunId, crewId: crew.id, userId: crew.members[0].id, items: ALL_SAFE });
    await confirmSupersOff(db, { visitId: wren.futureVisitId, crewId: crew.id, userId: crew.members[0].id, idempotencyKey: aKey("supers") });
    await recordTally(db, { visitId: wren.futureVisitId, crewId: crew.id, userId: crew.members[0].id, idempotencyKey: aKey("tally"), colonyLabel: "H1", outcome: "treated", recordedAt: new Date() });
    const before = await db("customers").where({ id: wren.customerId }).first();

    const refused = await deleteCustomerAccount(db, { customerId: wren.customerId, actorUserId: wren.userId }).catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(AccountDeletionRefused);
    expect((refused as AccountDeletionRefused).reason).toBe("visit_in_progress");
    expect(await db("customers").where({ id: wren.customerId }).first()).toEqual(before);
    expect(await db("attachments").where({ yard_id: wren.yards.home })).toHaveLength(1);
    expect(await db("audit_log").where({ action: "customer.delete" })).toEqual([]);
  });

  it("is refused while the visit is on a run already out with its crew today, which may be treating it offline", async () => {
    const wren = await aCustomerWithHistory(WREN);
    // The booked visit, on its published run, moved to today: the crew has it on the phone.
    await db("visits").where({ id: wren.futureVisitId }).update({ service_date: today });
    await db("runs").where({ id: wren.futureRunId }).update({ service_date: today });
    const before = await db("visits").where({ id: wren.futureVisitId }).first("status");

    const refused = await deleteCustomerAccount(db, { customerId: wren.customerId, actorUserId: wren.userId }).catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(AccountDeletionRefused);
    expect((refused as AccountDeletionRefused).reason).toBe("visit_on_run_today");
    expect((refused as AccountDeletionRefused).message).toMatch(/on today's run/);
    expect(await db("visits").where({ id: wren.futureVisitId }).first("status")).toEqual(before);
    expect(await db("stops").where({ visit_id: wren.futureVisitId })).toHaveLength(1);
    expect(await db("audit_log").where({ action: "customer.delete" })).toEqual([]);

    // Taken off the run by the office (a draft again), the deletion goes ahead.
    await db("runs").where({ id: wren.futureRunId }).update({ status: "draft" });
    const result = await deleteCustomerAccount(db, { customerId: wren.customerId, actorUserId: wren.userId });
    expect(result.keptUntil).not.toBeUndefined();
    expect(await db("visits").where({ id: wren.futureVisitId }).first("status")).toEqual({ status: "cancelled" });
  });

  it("keeps only the town of a yard address", () => {
    expect(townOfAddress("17 Larch Lane, Dryden, NY 13053")).toBe("Dryden, NY");
    expect(townOfAddress("Lane off Route 13, Freeville, NY 13068-1234")).toBe("Freeville, NY");
    expect(townOfAddress("4 Orchard Road, Ithaca")).toBe("Ithaca");
    expect(townOfAddress("Behind the red barn")).toBeNull();
    expect(townOfAddress(null)).toBeNull();
  });
});
