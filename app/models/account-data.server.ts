import { randomBytes } from "node:crypto";
import type { Knex } from "knex";
import { z } from "zod";
import { dateInZone } from "~/services/clock.server";
import { invoiceTotals } from "./invoices.server";
import { endUserSessions } from "./sessions.server";
import { loadBusinessSettings } from "./settings.server";
import { hashPassword } from "./users.server";

// A customer's own data: everything Varroute holds about them as one JSON download, and
// the deletion of their account.
//
// Deletion removes what identifies the person and keeps what the business must keep.
// Invoices (with their lines), payments, refunds, visits and tallies stay as they are,
// amounts and counts unchanged: tax and bookkeeping rules ask for invoices and payments to
// be kept for years, and pesticide rules ask applicators to keep application records
// (date, place, product, amount, applicator). They stay attached to a customer row that
// no longer carries contact details. The application records also name the customer and
// their address and the place of each treatment: when the customer had colonies treated,
// those fields are kept until records_kept_until (the last treatment day plus the
// retention in settings) and then anonymised by the worker's sweep
// (record-retention.server.ts); otherwise they are anonymised at once ("Deleted customer 12").

// ---------------------------------------------------------------------------------------
// Export

function iso(value: Date | string | null | undefined): string | null {
  if (value === null || value === undefined) return null;
  return value instanceof Date ? value.toISOString() : String(value);
}

export type CustomerDataExport = Awaited<ReturnType<typeof exportCustomerData>>;

/**
 * Everything Varroute holds about one customer, as plain JSON: profile and sign-in (never
 * the password hash), yards with access details, colonies, bookings, courses, visits,
 * the tallies of their colonies, invoices with lines, payments, refunds, the e-mails sent
 * to them (kind, subject, dates; not the bodies or attachments) and their photos by name.
 */
export async function exportCustomerData(db: Knex, customerId: number | string, now = new Date()) {
  const id = Number(customerId);
  const customer = await db("customers").where({ id }).first();
  if (!customer) throw new RangeError(`no customer ${id}`);
  const user = customer.user_id ? await db("users").where({ id: customer.user_id }).first("email", "name", "phone", "role", "created_at", "disabled_at") : undefined;

  const yards = await db("yards").where({ customer_id: id }).orderBy("id").select("*");
  const yardIds = yards.map((y) => y.id);
  const colonies = yardIds.length ? await db("colonies").whereIn("yard_id", yardIds).orderBy(["yard_id", "id"]).select("*") : [];
  const bookings = await db("bookings").where({ customer_id: id }).orderBy("id").select("*");
  const courses = yardIds.length ? await db("courses").whereIn("yard_id", yardIds).orderBy("id").select("*") : [];
  const visits = yardIds.length ? await db("visits").whereIn("yard_id", yardIds).orderBy([{ column: "service_date" }, { column: "id" }]).select("*") : [];
  const visitIds = visits.map((v) => v.id);
  const tallies = visitIds.length ? await db("tallies").whereIn("visit_id", visitIds).orderBy(["visit_id", "id"]).select("*") : [];
  const invoices = await db("invoices").where({ customer_id: id }).orderBy("id").select("*");
  const invoiceIds = invoices.map((i) => i.id);
  const lines = invoiceIds.length ? await db("invoice_lines").whereIn("invoice_id", invoiceIds).orderBy(["invoice_id", "position"]).select("*") : [];
  const payments = invoiceIds.length ? await db("payments").whereIn("invoice_id", invoiceIds).orderBy("id").select("*") : [];
  const paymentIds = payments.map((p) => p.id);
  const refunds = paymentIds.length ? await db("refunds").whereIn("payment_id", paymentIds).orderBy("id").select("*") : [];
  const emails = await db("email_log")
    .where((q) => {
      q.where({ customer_id: id });
      if (customer.email) q.orWhere((s) => s.whereNull("customer_id").whereRaw("lower(to_address) = lower(?)", [customer.email]));
    })
    .orderBy("id")
    .select("id", "kind", "to_address", "subject", "status", "created_at", "sent_at", "invoice_id", "booking_id", "visit_id");
  const photos =
    yardIds.length || visitIds.length
      ? await db("attachments")
          .where((q) => {
            if (yardIds.length) q.whereIn("yard_id", yardIds);
            if (visitIds.length) q.orWhereIn("visit_id", visitIds);
          })
          .orderBy("id")
          .select("id", "yard_id", "visit_id", "original_name", "content_type", "byte_size", "created_at")
      : [];

  return {
    format: "varroute-customer-data",
    version: 1,
    exportedAt: now.toISOString(),
    about:
      "Everything Varroute holds about you and your yards. Amounts are in cents; service dates are calendar dates (YYYY-MM-DD); other times are UTC. Photos are listed by name; download them from each yard's page.",
    profile: {
      customerId: id,
      name: customer.name,
      email: customer.email,
      phone: customer.phone,
      addressLine: customer.address_line,
      city: customer.city,
      region: customer.region,
      postalCode: customer.postal_code,
      notes: customer.notes,
      createdAt: iso(customer.created_at),
      updatedAt: iso(customer.updated_at),
      anonymisedAt: iso(customer.anonymised_at),
      signIn: user
        ? { email: user.email, name: user.name, phone: user.phone, role: user.role, createdAt: iso(user.created_at), disabledAt: iso(user.disabled_at) }
        : null,
    },
    yards: yards.map((y) => ({
      id: y.id,
      name: y.name,
      lat: Number(y.lat),
      lng: Number(y.lng),
      address: y.address,
      accessNotes: y.access_notes,
      colonyCount: y.colony_count,
      broodBoxesPerColony: y.brood_boxes_per_colony,
      broodStatus: y.brood_status,
      supersOff: y.supers_off,
      archivedAt: iso(y.archived_at),
      createdAt: iso(y.created_at),
      colonies: colonies
        .filter((c) => c.yard_id === y.id)
        .map((c) => ({ id: c.id, label: c.label, broodBoxes: c.brood_boxes, broodStatus: c.brood_status, active: c.active, notes: c.notes })),
    })),
    bookings: bookings.map((b) => ({
      id: b.id,
      yardId: b.yard_id,
      serviceDate: b.service_date,
      timePreference: b.time_preference,
      colonies: b.colonies,
      status: b.status,
      notes: b.notes,
      createdAt: iso(b.created_at),
      cancelledAt: iso(b.cancelled_at),
      cancelReason: b.cancel_reason,
    })),
    courses: courses.map((c) => ({
      id: c.id,
      yardId: c.yard_id,
      bookingId: c.booking_id,
      broodStatus: c.brood_status,
      roundsPlanned: c.rounds_planned,
      intervalDays: c.interval_days,
      status: c.status,
    })),
    visits: visits.map((v) => ({
      id: v.id,
      yardId: v.yard_id,
      courseId: v.course_id,
      roundNumber: v.round_number,
      serviceDate: v.service_date,
      timePreference: v.time_preference,
      status: v.status,
      coloniesExpected: v.colonies_expected,
      supersConfirmedAt: iso(v.supers_confirmed_at),
      startedAt: iso(v.started_at),
      finishedAt: iso(v.finished_at),
      weatherNote: v.weather_note,
      notes: v.notes,
      deferReason: v.defer_reason,
    })),
    tallies: tallies.map((t) => ({
      id: t.id,
      visitId: t.visit_id,
      colonyLabel: t.colony_label,
      outcome: t.outcome,
      skipReason: t.skip_reason,
      skipNote: t.skip_note,
      broodBoxes: t.brood_boxes,
      doseGrams: Number(t.dose_grams),
      mites: t.mites,
      beesSampled: t.bees_sampled,
      notes: t.notes,
      recordedAt: iso(t.recorded_at),
    })),
    invoices: invoices.map((i) => ({
      id: i.id,
      number: i.number,
      visitId: i.visit_id,
      status: i.status,
      issuedOn: i.issued_on,
      dueOn: i.due_on,
      subtotalCents: i.subtotal_cents,
      taxCents: i.tax_cents,
      totalCents: i.total_cents,
      currency: i.currency,
      voidReason: i.void_reason,
      sentAt: iso(i.sent_at),
      remindedAt: iso(i.reminded_at),
      lines: lines
        .filter((l) => l.invoice_id === i.id)
        .map((l) => ({ position: l.position, kind: l.kind, description: l.description, quantity: Number(l.quantity), unitCents: l.unit_cents, amountCents: l.amount_cents })),
    })),
    payments: payments.map((p) => ({
      id: p.id,
      invoiceId: p.invoice_id,
      amountCents: p.amount_cents,
      method: p.method,
      receivedAt: iso(p.received_at),
      reference: p.reference,
    })),
    refunds: refunds.map((r) => ({ id: r.id, paymentId: r.payment_id, amountCents: r.amount_cents, reason: r.reason, createdAt: iso(r.created_at) })),
    emails: emails.map((e) => ({
      id: e.id,
      kind: e.kind,
      to: e.to_address,
      subject: e.subject,
      status: e.status,
      queuedAt: iso(e.created_at),
      sentAt: iso(e.sent_at),
      invoiceId: e.invoice_id,
      bookingId: e.booking_id,
      visitId: e.visit_id,
    })),
    photos: photos.map((p) => ({
      id: p.id,
      yardId: p.yard_id,
      visitId: p.visit_id,
      name: p.original_name,
      contentType: p.content_type,
      byteSize: p.byte_size,
      uploadedAt: iso(p.created_at),
    })),
  };
}

/** The download's file name: "varroute-my-data-2026-11-10.json". */
export function exportFileName(today: string): string {
  return `varroute-my-data-${today}.json`;
}

// ---------------------------------------------------------------------------------------
// What the account page shows before deletion

export type AccountOverview = {
  name: string;
  email: string;
  phone: string | null;
  address: string[];
  yards: number;
  photos: number;
  openVisits: number;
  visitsDone: number;
  invoices: number;
  openInvoices: { count: number; cents: number };
  visitInProgress: boolean;
  /** Deleting now would keep the application-record fields until this day (null: removed at once). */
  recordsKeptUntil: string | null;
};

/**
 * The day a customer's application-record fields are kept until if the account is deleted:
 * the last finished visit with a treated colony plus the retention in years (29 February
 * becomes 28 February), or null when no colony of theirs was ever treated. Given `today`
 * (the business's date), also null when that day is already past: nothing needs the fields
 * any longer, so they go at once rather than at the worker's next sweep.
 */
export async function recordsKeptUntilFor(db: Knex, customerId: number, retentionYears: number, today?: string): Promise<string | null> {
  const row = (await db("visits as v")
    .join("yards as y", "y.id", "v.yard_id")
    .where("y.customer_id", customerId)
    .where("v.status", "done")
    .whereExists(db("tallies as t").whereRaw("t.visit_id = v.id").where("t.outcome", "treated").select(db.raw("1")))
    .first(db.raw("to_char(max(v.service_date) + make_interval(years => ?), 'YYYY-MM-DD') as kept_until", [retentionYears]))) as unknown as
    | { kept_until: string | null }
    | undefined;
  const keptUntil = row?.kept_until ?? null;
  // ISO dates compare as strings.
  return keptUntil !== null && today !== undefined && keptUntil < today ? null : keptUntil;
}

export async function accountOverview(db: Knex, customerId: number | string, today: string): Promise<AccountOverview> {
  const id = Number(customerId);
  const customer = await db("customers").where({ id }).first();
  if (!customer) throw new RangeError(`no customer ${id}`);
  const counts = (await db("yards")
    .leftJoin("visits", "visits.yard_id", "yards.id")
    .where("yards.customer_id", id)
    .first(
      db.raw("count(distinct yards.id) filter (where yards.archived_at is null)::int as yards"),
      db.raw("count(visits.id) filter (where visits.status in ('scheduled', 'deferred'))::int as open_visits"),
      db.raw("count(visits.id) filter (where visits.status = 'done')::int as visits_done"),
      db.raw("count(visits.id) filter (where visits.status = 'in_progress')::int as in_progress"),
    )) as unknown as { yards: number; open_visits: number; visits_done: number; in_progress: number };
  const photos = (await db("attachments")
    .where((q) => {
      q.whereIn("yard_id", db("yards").where({ customer_id: id }).select("id")).orWhereIn(
        "visit_id",
        db("visits").join("yards", "yards.id", "visits.yard_id").where("yards.customer_id", id).select("visits.id"),
      );
    })
    .first(db.raw("count(*)::int as n"))) as unknown as { n: number };
  const invoices = (await db("invoices").where({ customer_id: id }).first(db.raw("count(*)::int as n"))) as unknown as { n: number };
  const totals = await invoiceTotals(db, today, id);
  const { recordRetentionYears } = await loadBusinessSettings(db);
  const cityLine = [[customer.city, customer.region].filter(Boolean).join(", "), customer.postal_code].filter(Boolean).join(" ");
  return {
    name: customer.name,
    email: customer.email,
    phone: customer.phone,
    address: [customer.address_line ?? "", cityLine].map((l) => l.trim()).filter(Boolean),
    yards: counts.yards,
    photos: photos.n,
    openVisits: counts.open_visits,
    visitsDone: counts.visits_done,
    invoices: invoices.n,
    openInvoices: totals.open,
    visitInProgress: counts.in_progress > 0,
    recordsKeptUntil: await recordsKeptUntilFor(db, id, recordRetentionYears, today),
  };
}

// ---------------------------------------------------------------------------------------
// Deletion

/** The word the customer types to confirm. */
export const DELETE_CONFIRMATION_WORD = "DELETE";

/** The deletion form: the password again and the confirmation word (any case). */
export const accountDeletionSchema = z.object({
  password: z.string({ error: "Enter your password." }).min(1, { error: "Enter your password to show it is you." }),
  confirmation: z
    .string({ error: `Type ${DELETE_CONFIRMATION_WORD} to confirm.` })
    .trim()
    .refine((v) => v.toUpperCase() === DELETE_CONFIRMATION_WORD, { error: `Type the word ${DELETE_CONFIRMATION_WORD} to confirm.` }),
});

/** A deletion that cannot go ahead, with a message for the customer. */
export class AccountDeletionRefused extends Error {
  constructor(
    message: string,
    readonly reason: "already_deleted" | "visit_in_progress" | "visit_on_run_today" | "not_found",
  ) {
    super(message);
    this.name = "AccountDeletionRefused";
  }
}

export type AccountDeletionResult = {
  customerId: number;
  userId: number | null;
  visitsCancelled: number;
  bookingsCancelled: number;
  coursesCancelled: number;
  photosDeleted: number;
  /** Yards whose name, address and position were anonymised now (none while the records are kept). */
  yardsAnonymised: number;
  emailsRedacted: number;
  /** The application-record fields are kept until this day, then anonymised (null: anonymised now). */
  keptUntil: string | null;
};

const OPEN_VISIT = ["scheduled", "deferred"];
const CANCEL_NOTE = "Cancelled: the customer deleted their account.";

/** Keys of yard details in audit entries (the row's own columns and the yard form's fields). */
const YARD_DETAIL_KEYS = ["name", "address", "access_notes", "accessNotes", "lat", "lng"];

/** SQL removing keys from a jsonb audit column when it holds an object (left alone otherwise). */
function withoutKeys(trx: Knex, column: "before" | "after", keys: readonly string[]) {
  const list = keys.map(() => "?").join(", ");
  return trx.raw(`case when jsonb_typeof(??) = 'object' then ?? - array[${list}]::text[] else ?? end`, [column, column, ...keys, column]);
}

/**
 * A yard address reduced to its town: the first comma-separated part (the street, lane or
 * house) and any postal code are dropped, so "12 Mill Lane, Dryden, NY 13053" keeps
 * "Dryden, NY". An address of one part could be a street as well as a town, so nothing
 * is kept from it.
 */
export function townOfAddress(address: string | null): string | null {
  if (!address) return null;
  const parts = address
    .split(",")
    .map((p) => p.trim())
    .filter(Boolean);
  if (parts.length < 2) return null;
  const kept = parts
    .slice(1)
    .map((p) =>
      p
        .replace(/\b\d{5}(?:-\d{4})?\b/g, "") // US ZIP and ZIP+4
        .replace(/\b[A-Z]\d[A-Z]\s?\d[A-Z]\d\b/gi, "") // Canadian postal code
        .replace(/\s+/g, " ")
        .trim(),
    )
    .filter((p) => p && !/\d/.test(p));
  return kept.length ? kept.join(", ") : null;
}

/**
 * Anonymises the fields the application records hold about a customer (call inside a
 * transaction holding the customer row's lock): the name becomes "Deleted customer N", the
 * street address and postal code go (town and region stay, as the place of the records),
 * and each yard keeps only a coarse location: latitude and longitude rounded to 2 decimals
 * (a cell about 1.1 km north–south and 0.8 km east–west here, enough to say where a
 * treatment happened but not whose garden it was in) and the town of its address, named
 * "Yard N". The finish results stored for crew phones' replays (applied_changes) and the
 * "visit.finish" audit entries quote each visit's application record: both are rewritten
 * to quote it as it reads afterwards. Returns the number of yards anonymised.
 */
export async function anonymiseRecordFields(trx: Knex, customerId: number): Promise<number> {
  const customer = await trx("customers").where({ id: customerId }).first("city", "region");
  if (!customer) throw new RangeError(`no customer ${customerId}`);
  const yards = await trx("yards").where({ customer_id: customerId }).orderBy("id").select("id", "address", "lat", "lng");
  const town = [customer.city, customer.region].map((p) => p?.trim()).filter(Boolean).join(", ");
  for (const yard of yards) {
    const coarse = {
      name: `Yard ${yard.id}`,
      address: townOfAddress(yard.address),
      lat: Math.round(Number(yard.lat) * 100) / 100,
      lng: Math.round(Number(yard.lng) * 100) / 100,
    };
    await trx("yards")
      .where({ id: yard.id })
      .update({ ...coarse, updated_at: trx.fn.now() as unknown as Date });
    const record = JSON.stringify({
      customerName: `Deleted customer ${customerId}`,
      customerAddress: town,
      yardName: coarse.name,
      yardAddress: coarse.address,
      lat: coarse.lat,
      lng: coarse.lng,
    });
    const yardVisits = trx("visits").where({ yard_id: yard.id });
    await trx("applied_changes")
      .where({ kind: "finish" })
      .whereIn("visit_id", yardVisits.clone().select("id"))
      .whereRaw("jsonb_typeof(result -> 'applicationRecord') = 'object'")
      .update({ result: trx.raw("jsonb_set(result, '{applicationRecord}', (result -> 'applicationRecord') || ?::jsonb)", [record]) });
    await trx("audit_log")
      .where({ entity_type: "visit", action: "visit.finish" })
      .whereIn("entity_id", yardVisits.clone().select(trx.raw("id::text")))
      .whereRaw("jsonb_typeof(after -> 'applicationRecord') = 'object'")
      .update({ after: trx.raw("jsonb_set(after, '{applicationRecord}', (after -> 'applicationRecord') || ?::jsonb)", [record]) });
  }
  await trx("customers")
    .where({ id: customerId })
    .update({ name: `Deleted customer ${customerId}`, address_line: null, postal_code: null, updated_at: trx.fn.now() as unknown as Date });
  return yards.length;
}

/**
 * Deletes a customer's account in one transaction:
 * - open visits (scheduled or deferred) are cancelled and taken off their runs, which
 *   frees their room on the day, as a dispatcher's cancellation does, but without an
 *   e-mail; open bookings and active courses are cancelled;
 * - photos of their yards and visits are deleted;
 * - the customer row loses e-mail, phone, notes and the card processor's customer id, and
 *   gets anonymised_at;
 * - yards lose their access notes and are archived;
 * - the application-record fields (customer name and address, yard names, addresses and
 *   positions) are anonymised now (anonymiseRecordFields) when no colony of the customer
 *   was ever treated; otherwise they are kept until records_kept_until, the last treatment
 *   day plus the retention in settings, and the worker's sweep anonymises them after it;
 * - e-mails to them lose address, subject and bodies, and unsent ones are never sent;
 * - the sign-in is disabled, its e-mail, name, phone and password replaced, so signing in
 *   fails, and every session of it, on every device, is deleted;
 * - earlier audit entries lose the e-mail address, name, phone and yard details they quoted
 *   (the finish results quoting an application record follow the record fields);
 * - one audit row "customer.delete" records the deletion, with counts and keptUntil only.
 * Kept, unchanged: invoices with lines, payments, refunds, done visits and tallies.
 */
export async function deleteCustomerAccount(
  db: Knex,
  input: { customerId: number | string; actorUserId: number | string },
): Promise<AccountDeletionResult> {
  const customerId = Number(input.customerId);
  // An unusable password: a hash of random bytes nobody knows (hashed before the transaction, bcrypt is slow).
  const unusableHash = await hashPassword(randomBytes(32).toString("base64"));

  return db.transaction(async (trx) => {
    const customer = await trx("customers").where({ id: customerId }).forUpdate().first();
    if (!customer) throw new AccountDeletionRefused("There is no such account.", "not_found");
    if (customer.anonymised_at) {
      throw new AccountDeletionRefused("This account has already been deleted; nothing about you is left to remove.", "already_deleted");
    }
    const yards = await trx("yards").where({ customer_id: customerId }).forUpdate().select("id");
    const yardIds = yards.map((y) => Number(y.id));
    const visits = yardIds.length ? await trx("visits").whereIn("yard_id", yardIds).forUpdate().select("id", "status", "course_id") : [];
    if (visits.some((v) => v.status === "in_progress")) {
      throw new AccountDeletionRefused(
        "A crew is treating your colonies right now. You can delete your account once they have finished the visit.",
        "visit_in_progress",
      );
    }
    // A visit on a run already out with its crew (published or under way, today or before):
    // the crew may be treating it offline, and its tallies must find the visit when they sync.
    const todayHere = dateInZone(new Date(), (await loadBusinessSettings(trx)).timeZone);
    const openIds = visits.filter((v) => OPEN_VISIT.includes(v.status)).map((v) => Number(v.id));
    const onRunOut = openIds.length
      ? await trx("stops")
          .join("runs", "runs.id", "stops.run_id")
          .whereIn("stops.visit_id", openIds)
          .whereIn("runs.status", ["published", "in_progress"])
          .where("runs.service_date", "<=", todayHere)
          .first("stops.visit_id")
      : undefined;
    if (onRunOut) {
      throw new AccountDeletionRefused(
        "A crew has your yard on today's run. You can delete your account once they have finished the visit, or ask the office to take it off the run.",
        "visit_on_run_today",
      );
    }
    const visitIds = visits.map((v) => Number(v.id));

    // Open visits: off their runs (the run is marked for re-planning), then cancelled.
    const open = visits.filter((v) => OPEN_VISIT.includes(v.status)).map((v) => Number(v.id));
    if (open.length) {
      const stops = await trx("stops").whereIn("visit_id", open).select("id", "run_id");
      if (stops.length) {
        await trx("stops").whereIn("id", stops.map((s) => s.id)).delete();
        await trx("runs")
          .whereIn("id", [...new Set(stops.map((s) => s.run_id))])
          .increment("version", 1)
          .update({ updated_at: trx.fn.now() });
      }
      await trx("visits").whereIn("id", open).update({ status: "cancelled", notes: CANCEL_NOTE, updated_at: trx.fn.now() });
    }
    const coursesCancelled = yardIds.length
      ? await trx("courses").whereIn("yard_id", yardIds).where({ status: "active" }).update({ status: "cancelled", updated_at: trx.fn.now() })
      : 0;
    const bookingsCancelled = await trx("bookings")
      .where({ customer_id: customerId })
      .whereIn("status", ["requested", "confirmed"])
      .update({ status: "cancelled", cancelled_at: trx.fn.now(), cancel_reason: "The customer deleted their account.", updated_at: trx.fn.now() });
    // Booking notes are the customer's own words.
    await trx("bookings").where({ customer_id: customerId }).update({ notes: null });

    // Photos: the bytes and their names.
    const photosDeleted =
      yardIds.length || visitIds.length
        ? await trx("attachments")
            .where((q) => {
              if (yardIds.length) q.whereIn("yard_id", yardIds);
              if (visitIds.length) q.orWhereIn("visit_id", visitIds);
            })
            .delete()
        : 0;

    // Yards: access notes (gate codes, where the key is) go now and the yards are archived.
    // Name, address and position are application-record fields (see the decision below).
    if (yardIds.length) {
      await trx("yards")
        .whereIn("id", yardIds)
        .update({
          access_notes: "",
          archived_at: trx.raw("coalesce(archived_at, now())") as unknown as Date,
          updated_at: trx.fn.now() as unknown as Date,
        });
      await trx("colonies").whereIn("yard_id", yardIds).update({ notes: null, updated_at: trx.fn.now() });
    }

    // E-mails to them: unsent ones are given up, then every one loses address, subject and content.
    const emailRows = () =>
      trx("email_log").where((q) => {
        q.where({ customer_id: customerId });
        if (customer.email) q.orWhere((s) => s.whereNull("customer_id").whereRaw("lower(to_address) = lower(?)", [customer.email]));
      });
    await emailRows()
      .whereIn("status", ["queued", "failed"])
      .update({ status: "failed", next_attempt_at: null, last_error: "Not sent: the customer deleted their account.", updated_at: trx.fn.now() });
    const emailsRedacted = await emailRows().update({
      to_address: "",
      subject: "(removed when the customer deleted their account)",
      html: null,
      text_body: null,
      attachments: null,
      updated_at: trx.fn.now(),
    });

    // The application records must be kept for a period after the last treatment with the
    // customer's name and address and the place of each treatment: with a treated colony,
    // those fields stay until keptUntil (the worker's sweep anonymises them after it);
    // without one, nothing needs them and they go now.
    // The settings row shared-locked: an owner raising the retention meanwhile (which extends
    // existing holds under that row's lock) either finishes first or waits for this deletion.
    await trx("settings").where({ key: "business" }).forShare().first("key");
    const { recordRetentionYears, timeZone } = await loadBusinessSettings(trx);
    const keptUntil = await recordsKeptUntilFor(trx, customerId, recordRetentionYears, dateInZone(new Date(), timeZone));
    await trx("customers")
      .where({ id: customerId })
      .update({
        email: "",
        phone: null,
        notes: null,
        stripe_customer_id: null,
        records_kept_until: keptUntil,
        anonymised_at: trx.fn.now() as unknown as Date,
        updated_at: trx.fn.now() as unknown as Date,
      });
    const yardsAnonymised = keptUntil === null ? await anonymiseRecordFields(trx, customerId) : 0;

    // The sign-in: disabled and stripped (the row stays, as the actor of audit entries).
    const userId = customer.user_id === null ? null : Number(customer.user_id);
    if (userId !== null) {
      await trx("users")
        .where({ id: userId })
        .update({
          email: `deleted-user-${userId}@deleted.invalid`,
          name: `Deleted customer ${customerId}`,
          phone: null,
          applicator_licence: null,
          password_hash: unusableHash,
          disabled_at: trx.raw("coalesce(disabled_at, now())") as unknown as Date,
          updated_at: trx.fn.now() as unknown as Date,
        });
      await endUserSessions(trx, userId);
      // Open reset and e-mail-change links (a pending change holds the new address).
      await trx("password_resets").where({ user_id: userId }).delete();
      await trx("email_changes").where({ user_id: userId }).delete();
      // Earlier audit entries that quoted their e-mail address, name or phone (profile changes).
      const personal = ["email", "name", "phone"];
      await trx("audit_log")
        .where({ entity_type: "user", entity_id: String(userId) })
        .update({ before: withoutKeys(trx, "before", personal), after: withoutKeys(trx, "after", personal) });
    }
    // Pending sign-ups for the address hold a name, phone and password hash.
    if (customer.email) await trx("sign_up_requests").whereRaw("lower(email) = lower(?)", [customer.email]).delete();
    if (yardIds.length) {
      await trx("audit_log")
        .where({ entity_type: "yard" })
        .whereIn("entity_id", yardIds.map(String))
        .update({ before: withoutKeys(trx, "before", YARD_DETAIL_KEYS), after: withoutKeys(trx, "after", YARD_DETAIL_KEYS) });
    }
    await trx("audit_log")
      .where({ entity_type: "invoice" })
      .whereIn("entity_id", trx("invoices").where({ customer_id: customerId }).select(trx.raw("id::text")))
      .update({ after: withoutKeys(trx, "after", ["to"]) });

    const result: AccountDeletionResult = {
      customerId,
      userId,
      visitsCancelled: open.length,
      bookingsCancelled,
      coursesCancelled,
      photosDeleted,
      yardsAnonymised,
      emailsRedacted,
      keptUntil,
    };
    await trx("audit_log").insert({
      actor_user_id: Number(input.actorUserId),
      action: "customer.delete",
      entity_type: "customer",
      entity_id: String(customerId),
      before: null,
      after: JSON.stringify({ ...result, kept: ["invoices", "payments", "refunds", "visits", "tallies"] }),
    });
    return result;
  });
}
