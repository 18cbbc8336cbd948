import { z } from "zod";
import { formatDollars } from "./billing";

// The audit trail in plain words: which area of the business an action belongs to, who did
// it when no person did (the worker, Stripe), a sentence for each action code, the record it
// concerns with a link to its page, and its before → after fields as readable pairs.
// Pure: everything a sentence needs comes in (the audit row, plus facts the model looked up,
// such as the invoice number of a payment).

// ---------------------------------------------------------------------------------------
// Areas

export const AUDIT_AREAS = ["bookings", "runs", "tallies", "invoices", "payments", "settings", "customers", "other"] as const;
export type AuditArea = (typeof AUDIT_AREAS)[number];

export const AUDIT_AREA_LABELS: Record<AuditArea, string> = {
  bookings: "Bookings",
  runs: "Runs",
  tallies: "Tallies",
  invoices: "Invoices",
  payments: "Payments",
  settings: "Settings",
  customers: "Customers and yards",
  other: "Other",
};

/**
 * Which actions belong to an area: whole action codes first (the visit.* actions are split
 * between bookings and tallies), then prefixes. "other" is whatever no rule claims.
 */
export const AUDIT_AREA_RULES: Record<Exclude<AuditArea, "other">, { actions: readonly string[]; prefixes: readonly string[] }> = {
  bookings: { actions: ["visit.reschedule", "visit.cancel", "visit.next_round", "visit.time_of_day"], prefixes: ["booking.", "course."] },
  runs: { actions: [], prefixes: ["service_day.", "run.", "stop.", "crew.", "crew_day."] },
  tallies: { actions: ["visit.supers_off", "visit.air_temp", "visit.finish"], prefixes: ["tally."] },
  invoices: { actions: [], prefixes: ["invoice."] },
  payments: { actions: [], prefixes: ["payment.", "refund."] },
  settings: { actions: [], prefixes: ["settings.", "business.", "staff."] },
  customers: { actions: [], prefixes: ["customer.", "customers.", "yard.", "colony.", "user."] },
};

const RULE_ENTRIES = Object.entries(AUDIT_AREA_RULES) as [Exclude<AuditArea, "other">, { actions: readonly string[]; prefixes: readonly string[] }][];

/** Every whole action code some area names (these never fall to a prefix rule). */
export const AUDIT_NAMED_ACTIONS: readonly string[] = RULE_ENTRIES.flatMap(([, rule]) => rule.actions);

export function auditAreaOf(action: string): AuditArea {
  for (const [area, rule] of RULE_ENTRIES) if (rule.actions.includes(action)) return area;
  for (const [area, rule] of RULE_ENTRIES) if (rule.prefixes.some((p) => action.startsWith(p))) return area;
  return "other";
}

// ---------------------------------------------------------------------------------------
// Who

/**
 * Who did it when no user did: Stripe for what its signed webhooks record (card payments and
 * refunds, and the invoice status they settle), the system (the worker, the pay link) otherwise.
 */
export function systemActorName(action: string): "Stripe" | "System" {
  return action === "payment.card" || action === "payment.card_refused" || action === "refund.card" || action === "invoice.status" ? "Stripe" : "System";
}

const ROLE_NAMES: Record<string, string> = {
  owner: "Owner",
  office: "Office",
  dispatcher: "Dispatcher",
  crew: "Crew",
  customer: "Customer",
};

export function roleName(role: string): string {
  return ROLE_NAMES[role] ?? humanise(role);
}

// ---------------------------------------------------------------------------------------
// Small readers and formatters

type Json = Record<string, unknown>;

function record(value: unknown): Json {
  return value !== null && typeof value === "object" && !Array.isArray(value) ? (value as Json) : {};
}

function text(value: unknown): string | null {
  if (typeof value === "string") return value.trim() ? value.trim() : null;
  if (typeof value === "number" && Number.isFinite(value)) return String(value);
  return null;
}

function count(value: unknown): number | null {
  if (typeof value === "number" && Number.isFinite(value)) return value;
  if (typeof value === "string" && /^-?\d+(\.\d+)?$/.test(value.trim())) return Number(value);
  return null;
}

const CHECKOUT_CLOSED_WHY: Record<string, string> = {
  replaced: "a new checkout replaced it",
  balance_changed: "the balance changed",
  void: "the invoice was voided",
  expired_in_stripe: "it had expired at Stripe",
  unknown_to_stripe: "Stripe no longer knew it",
};

const CARD_REFUSED_WHY: Record<string, string> = {
  no_invoice: "the invoice it named does not exist",
  unknown_session: "the checkout was not made for this invoice",
  invoice_not_open: "the invoice took no more payments",
  currency_mismatch: "it was paid in another currency",
  over_balance: "it was more than the balance owed",
};

function money(value: unknown): string | null {
  const cents = count(value);
  return cents !== null && Number.isSafeInteger(cents) && cents >= 0 ? formatDollars(cents) : null;
}

function plural(n: number, one: string, many = `${one}s`): string {
  return `${n.toLocaleString("en-US")} ${n === 1 ? one : many}`;
}

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;
const ISO_INSTANT = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}/;
const dayFormat = new Intl.DateTimeFormat("en-US", { weekday: "short", month: "short", day: "numeric", year: "numeric", timeZone: "UTC" });

/** "Tue, Nov 10, 2026" for a service day; anything else as given. */
export function formatAuditDay(value: unknown): string | null {
  const day = text(value);
  if (!day) return null;
  if (!ISO_DATE.test(day) || Number.isNaN(Date.parse(`${day}T00:00:00Z`))) return day;
  return dayFormat.format(new Date(`${day}T00:00:00Z`));
}

/** "Nov 30, 2026, 4:05 PM EST": an instant on the business's clock, with its zone. */
export function formatAuditTime(instant: Date | string, timeZone: string): string {
  const date = new Date(instant);
  if (Number.isNaN(date.getTime())) return String(instant);
  return new Intl.DateTimeFormat("en-US", {
    year: "numeric",
    month: "short",
    day: "numeric",
    hour: "numeric",
    minute: "2-digit",
    timeZone,
    timeZoneName: "short",
  }).format(date);
}

const WORD_CASE: Record<string, string> = { id: "ID", ids: "IDs", url: "URL", pdf: "PDF", gpx: "GPX", osrm: "OSRM", epa: "EPA" };

/** "stripePaymentIntentId" / "service_date" → "Stripe payment intent ID" / "Service date". */
export function humanise(key: string): string {
  const words = key
    .replace(/([a-z0-9])([A-Z])/g, "$1 $2")
    .replace(/[_.\-]+/g, " ")
    .trim()
    .toLowerCase()
    .split(/\s+/)
    .filter(Boolean)
    .map((w) => WORD_CASE[w] ?? w);
  if (words.length === 0) return key;
  const first = words[0];
  words[0] = first === first.toUpperCase() ? first : first.charAt(0).toUpperCase() + first.slice(1);
  return words.join(" ");
}

const SKIP_REASONS: Record<string, string> = {
  dead_out: "dead-out",
  queenless: "queenless",
  supers_on: "supers on",
  aggressive: "aggressive",
  not_reachable: "not reachable",
  other: "other reason",
};

/** The settings' names as the settings page words them (lower case, for sentences). */
const SETTING_NAMES: Record<string, string> = {
  unitSystem: "units",
  doseGramsPerBroodBox: "dose per brood box",
  labelMaximumGramsPerBroodBox: "label maximum per brood box",
  productName: "product name",
  productRegistrationNumber: "registration number",
  roundsWithBrood: "rounds with brood",
  roundIntervalDays: "days between rounds",
  miteThresholds: "mite thresholds",
  beesPer100Ml: "bees per 100 mL",
  sublimationSeconds: "sublimation time",
  entranceClosedMinutes: "entrance closed time",
  moveBetweenHivesMinutes: "move between hives",
  blockReheatSeconds: "block reheat time",
  setupMinutes: "set-up time",
  vaporizersPerCrew: "vaporizers per crew",
  typicalColoniesPerYard: "typical colonies per yard",
  averageDriveMinutesBetweenYards: "average drive between yards",
  blockMinC: "lowest block temperature",
  blockMaxC: "highest block temperature",
  circuityFactor: "road circuity factor",
  averageSpeedKmh: "average speed",
  timeZone: "time zone",
  pricePerColonyCents: "price per colony",
  tripFeeCents: "trip fee",
  minimumPerVisitCents: "minimum per visit",
  taxRateBasisPoints: "tax rate",
  paymentTermsDays: "payment terms",
  overdueReminderDays: "overdue reminder",
};

function same(a: unknown, b: unknown): boolean {
  return JSON.stringify(a ?? null) === JSON.stringify(b ?? null);
}

/** The keys whose values differ between two objects, in the order they first appear. */
function changedKeys(before: Json, after: Json): string[] {
  const keys = [...new Set([...Object.keys(before), ...Object.keys(after)])];
  return keys.filter((k) => !same(before[k], after[k]));
}

// ---------------------------------------------------------------------------------------
// Sentences

export type AuditFacts = {
  action: string;
  entityType: string;
  entityId: string;
  before: unknown;
  after: unknown;
  /** The number of the invoice the entry concerns (an invoice, or a payment or refund on one), when known. */
  invoiceNumber?: string | null;
};

function withReason(sentence: string, reason: unknown): string {
  const why = text(reason);
  return why ? `${sentence}: ${why}` : sentence;
}

function invoiceName(facts: AuditFacts, after: Json): string {
  const number = text(after.number) ?? text(facts.invoiceNumber);
  if (number) return `invoice ${number}`;
  return facts.entityType === "invoice" ? `invoice #${facts.entityId}` : "an invoice";
}

function washText(mites: unknown, bees: unknown): string {
  const m = count(mites);
  const b = count(bees);
  return m !== null && b !== null ? `; ${plural(m, "mite")} in ${plural(b, "bee")}` : "";
}

function grams(value: unknown): string | null {
  const g = count(value);
  return g === null ? null : `${Number(g.toFixed(2)).toLocaleString("en-US")} g`;
}

type Describe = (facts: AuditFacts, before: Json, after: Json) => string;

/** The crew form's fields in words, for "Changed the crew …: hours, weekdays". */
const CREW_FIELD_NAMES: Record<string, string> = {
  name: "name",
  memberIds: "members",
  active: "active",
  startLabel: "start point",
  start: "start point",
  endLabel: "end point",
  end: "end point",
  workStart: "hours",
  workEnd: "hours",
  vaporizers: "vaporizers",
  workingWeekdays: "weekdays",
  maxColoniesPerDay: "most colonies a day",
  maxDoseGramsPerDay: "most grams a day",
};

/** ", moving 3 visits to other days" when a working-day change moved visits. */
function movedText(moved: unknown): string {
  const n = Array.isArray(moved) ? moved.length : 0;
  return n > 0 ? `, moving ${plural(n, "visit")} to other days` : "";
}

const SENTENCES: Record<string, Describe> = {
  "booking.create": (_f, _b, a) => {
    const colonies = count(a.colonies);
    const rounds = count(a.rounds);
    const day = formatAuditDay(a.serviceDate);
    let sentence = `Booked ${colonies !== null ? plural(colonies, "colony", "colonies") : "a treatment"}${day ? ` for ${day}` : ""}`;
    if (rounds !== null && rounds > 1) sentence += ` (${rounds} rounds)`;
    return sentence;
  },
  "booking.cancel": (_f, _b, a) => withReason("Cancelled the booking", a.cancel_reason ?? a.reason),
  "visit.reschedule": (_f, b, a) => {
    const from = formatAuditDay(b.serviceDate);
    const to = formatAuditDay(a.serviceDate);
    return withReason(`Moved the visit${from ? ` from ${from}` : ""}${to ? ` to ${to}` : ""}`, a.reason);
  },
  "visit.time_of_day": (_f, b, a) => {
    const names: Record<string, string> = { any: "any time", morning: "the morning", afternoon: "the afternoon" };
    const to = typeof a.timePreference === "string" ? (names[a.timePreference] ?? a.timePreference) : null;
    const from = typeof b.timePreference === "string" ? (names[b.timePreference] ?? b.timePreference) : null;
    const sentence = `Changed the visit's time of day${from ? ` from ${from}` : ""}${to ? ` to ${to}` : ""}`;
    return a.takenOffRun === true ? `${sentence}, and took it off its run` : sentence;
  },
  "visit.cancel": (_f, b, a) => {
    const day = formatAuditDay(b.serviceDate);
    return withReason(`Cancelled the visit${day ? ` on ${day}` : ""}`, a.reason);
  },
  "visit.next_round": (_f, _b, a) => {
    const round = count(a.roundNumber);
    const day = formatAuditDay(a.serviceDate);
    const sentence = `Booked ${round !== null ? `round ${round}` : "the next round"}${day ? ` for ${day}` : ""}`;
    return a.status === "deferred" ? withReason(`${sentence}, deferred`, a.deferReason) : sentence;
  },
  "course.complete": (_f, _b, a) => {
    const rounds = count(a.rounds);
    return rounds !== null ? `Completed the course of ${plural(rounds, "round")}` : "Completed the course";
  },
  "course.rounds_added": (_f, _b, a) => {
    const added = count(a.roundsAdded);
    const rounds = count(a.roundsPlanned);
    const what = added !== null ? `Added ${plural(added, "round")} to the course` : "Added rounds to the course";
    return `${what}: the crew found brood${rounds !== null ? ` (${rounds} rounds in all)` : ""}`;
  },
  "service_day.plan": (f, _b, a) => {
    const crews = Array.isArray(a.crews) ? a.crews.map(record) : [];
    const routed = crews.filter((c) => (count(c.stops) ?? 0) > 0);
    const stops = routed.reduce((sum, c) => sum + (count(c.stops) ?? 0), 0);
    const deferred = Array.isArray(a.deferred) ? a.deferred.length : 0;
    const day = formatAuditDay(f.entityId);
    let sentence = `Planned ${day ?? "the day"}: ${plural(stops, "stop")} on ${plural(routed.length, "run")}`;
    if (deferred > 0) sentence += `, ${deferred} deferred`;
    return sentence;
  },
  "run.plan": (_f, b, a) => {
    if (a.deleted === true) return "Removed the run, left with no stops";
    const stops = Array.isArray(a.stops) ? a.stops.length : null;
    const version = count(a.version);
    const what = stops === null ? "" : ` with ${plural(stops, "stop")}`;
    const v = version !== null ? ` (version ${version})` : "";
    return Object.keys(b).length === 0 ? `Made a draft run${what}${v}` : `Re-planned the run as a draft${what}${v}`;
  },
  "stop.move": (_f, b, a) => {
    const position = count(a.position);
    const at = position !== null ? ` to position ${position + 1}` : "";
    if (b.status !== undefined && b.runId === undefined) return `Put the visit on a run${position !== null ? ` at position ${position + 1}` : ""}`;
    if (b.crewId !== undefined && a.crewId !== undefined && !same(b.crewId, a.crewId)) return `Moved the stop to another crew's run${position !== null ? `, position ${position + 1}` : ""}`;
    return `Moved the stop${at} on its run`;
  },
  "stop.lock": (_f, _b, a) => {
    const position = count(a.position);
    return `Locked the stop to its crew${position !== null ? ` at position ${position + 1}` : ""}`;
  },
  "stop.unlock": () => "Unlocked the stop for re-planning",
  "run.publish": (_f, _b, a) => {
    const day = formatAuditDay(a.service_date ?? a.serviceDate);
    const stops = count(a.stops);
    const version = count(a.version);
    let sentence = `Published the run${day ? ` for ${day}` : ""} to the crew`;
    if (stops !== null) sentence += ` with ${plural(stops, "stop")}`;
    if (version !== null) sentence += ` (version ${version})`;
    return sentence;
  },
  "run.safety_check": () => "Ticked the safety check before the first stop",
  "visit.supers_off": () => "Confirmed the honey supers are off",
  "visit.air_temp": (_f, b, a) => {
    const now = count(a.airTempC);
    const was = count(b.airTempC);
    let sentence = now === null ? "Recorded the air temperature at the yard" : `Recorded the air temperature at the yard: ${now} °C`;
    if (was !== null && was !== now) sentence += ` (was ${was} °C)`;
    if (text(a.warning)) sentence += ", outside the business's band for treating";
    return sentence;
  },
  "tally.record": (_f, _b, a) => {
    const colony = text(a.colonyLabel) ?? "a colony";
    if (a.outcome === "skipped") {
      const reason = SKIP_REASONS[String(a.skipReason)] ?? text(a.skipReason);
      return `Recorded colony ${colony} as skipped${reason ? ` (${reason})` : ""}`;
    }
    const dose = grams(a.doseGrams);
    return `Recorded colony ${colony} as treated${dose ? ` with ${dose}` : ""}${washText(a.mites, a.beesSampled)}`;
  },
  "tally.change": (_f, b, a) => {
    const colony = text(a.colonyLabel) ?? text(b.colonyLabel) ?? "a colony";
    const outcome = text(a.outcome);
    if (b.outcome !== undefined && outcome && b.outcome !== a.outcome) {
      return `Changed colony ${colony} from ${String(b.outcome)} to ${outcome}${washText(a.mites, a.beesSampled)}`;
    }
    return `Corrected the tally of colony ${colony}${outcome ? ` (${outcome})` : ""}${washText(a.mites, a.beesSampled)}`;
  },
  "visit.finish": (_f, _b, a) => {
    const treated = count(a.treated);
    const skipped = count(a.skipped);
    const applied = grams(a.grams);
    const parts = [treated !== null ? `${treated} treated` : null, skipped !== null ? `${skipped} skipped` : null, applied ? `${applied} applied` : null].filter(Boolean);
    let sentence = `Finished the visit${parts.length ? `: ${parts.join(", ")}` : ""}`;
    const invoice = text(a.invoiceNumber);
    if (invoice) sentence += `; invoice ${invoice}`;
    return sentence;
  },
  "invoice.create": (f, _b, a) => {
    const total = money(a.totalCents);
    const colonies = count(a.coloniesTreated);
    let sentence = `Created ${invoiceName(f, a)}${total ? ` for ${total}` : ""}`;
    if (colonies !== null) sentence += ` (${plural(colonies, "colony", "colonies")} treated)`;
    return sentence;
  },
  "invoice.email_queued": (f, _b, a) => {
    const to = text(a.to);
    return `Queued ${invoiceName(f, a)} for e-mail${to ? ` to ${to}` : ""}`;
  },
  "invoice.email_resent": (f, _b, a) => {
    const to = text(a.to);
    return `Resent ${invoiceName(f, a)}${to ? ` to ${to}` : ""}`;
  },
  "invoice.reminder_queued": (f, _b, a) => {
    const to = text(a.to);
    return `Queued a payment reminder for ${invoiceName(f, a)}${to ? ` to ${to}` : ""}`;
  },
  "invoice.void": (f, _b, a) => withReason(`Voided ${invoiceName(f, a)}`, a.reason ?? a.void_reason),
  "invoice.status": (f, b, a) => {
    const from = text(b.status);
    const to = text(a.status);
    const name = invoiceName(f, a);
    return `${name.charAt(0).toUpperCase()}${name.slice(1)} ${from && to ? `went from ${from} to ${to}` : to ? `is now ${to}` : "changed status"}`;
  },
  "invoice.checkout_session": (f, _b, a) => {
    const amount = money(a.amountCents);
    return `Opened a card checkout${amount ? ` for ${amount}` : ""} on ${invoiceName(f, a)}`;
  },
  "business.setup": (_f, _b, a) => {
    const name = text(a.businessName);
    const owner = text(a.ownerEmail);
    return `Set up the business${name ? ` ${name}` : ""} and made the owner account${owner ? ` ${owner}` : ""}`;
  },
  "invoice.checkout_expired": (f, _b, a) => {
    const why = CHECKOUT_CLOSED_WHY[text(a.why) ?? ""];
    return `Closed the card checkout on ${invoiceName(f, a)}${why ? ` (${why})` : ""}`;
  },
  "payment.card_refused": (f, _b, a) => {
    const amount = money(a.amountCents);
    const reason = CARD_REFUSED_WHY[text(a.reason) ?? ""];
    return `Refunded ${amount ?? "a card payment"} to the card on ${invoiceName(f, a)}${reason ? `: ${reason}` : ""}`;
  },
  "payment.card": (f, _b, a) => {
    const amount = money(a.amountCents);
    return `Received a card payment${amount ? ` of ${amount}` : ""} on ${invoiceName(f, a)}`;
  },
  "payment.record": (f, _b, a) => {
    const amount = money(a.amountCents);
    const method = text(a.method);
    const reference = text(a.reference);
    return `Recorded a ${method ?? "manual"} payment${amount ? ` of ${amount}` : ""} on ${invoiceName(f, a)}${reference ? ` (reference ${reference})` : ""}`;
  },
  "refund.card": (f, _b, a) => {
    const amount = money(a.amountCents);
    return withReason(`Refunded ${amount ?? "a card payment"}${amount ? " to the card" : ""} on ${invoiceName(f, a)}`, a.reason);
  },
  "refund.record": (f, _b, a) => {
    const amount = money(a.amountCents);
    const method = text(a.method);
    return withReason(`Refunded ${amount ?? "part"} of a ${method ?? "recorded"} payment on ${invoiceName(f, a)}`, a.reason);
  },
  "refund.create": (f, _b, a) => {
    const amount = money(a.amountCents ?? a.amount_cents);
    return `Refunded ${amount ?? "a payment"} on ${invoiceName(f, a)}`;
  },
  "settings.update": (_f, b, a) => {
    if (Object.keys(b).length === 0) return "Saved the business settings for the first time";
    const names = changedKeys(b, a).map((k) => SETTING_NAMES[k] ?? humanise(k).toLowerCase());
    if (names.length === 0) return "Saved the business settings without changes";
    return `Changed the business settings: ${names.join(", ")}`;
  },
  "yard.create": (_f, _b, a) => {
    const name = text(a.name);
    return name ? `Added the yard ${name}` : "Added a yard";
  },
  "yard.update": (_f, b, a) => {
    const name = text(a.name) ?? text(b.name);
    return name ? `Updated the yard ${name}` : "Updated a yard";
  },
  "yard.photo_add": () => "Added a photo of the yard",
  "yard.photo_delete": () => "Removed a photo of the yard",
  "colony.deactivate": (_f, _b, a) => withReason("Retired the colony", a.notes),
  "colony.correct": (_f, b, a) => {
    const colony = text(a.colonyLabel) ?? text(b.colonyLabel) ?? "a colony";
    const changes: string[] = [];
    const boxes = count(a.broodBoxes);
    if (boxes !== null && !same(a.broodBoxes, b.broodBoxes)) changes.push(plural(boxes, "brood box", "brood boxes"));
    if (text(a.boxType) && !same(a.boxType, b.boxType)) changes.push(`${String(a.boxType)} boxes`);
    if (text(a.broodStatus) && !same(a.broodStatus, b.broodStatus)) changes.push(a.broodStatus === "brood" ? "brood seen" : a.broodStatus === "broodless" ? "no brood seen" : String(a.broodStatus));
    return `Corrected colony ${colony} at the hive${changes.length ? `: ${changes.join(", ")}` : ""}`;
  },
  "customers.import": (_f, _b, a) => {
    const rows = count(a.rows);
    const created = count(a.customersCreated);
    const updated = count(a.customersUpdated);
    const yards = count(a.yardsCreated);
    const parts = [
      created !== null ? `${plural(created, "new customer")}` : null,
      updated !== null ? `${updated} updated` : null,
      yards !== null ? `${plural(yards, "new yard")}` : null,
    ].filter(Boolean);
    return `Imported ${rows !== null ? plural(rows, "row") : "customers"}${parts.length ? `: ${parts.join(", ")}` : ""}`;
  },
  "customer.sign_up": (_f, _b, a) => {
    const email = text(a.email);
    return `Signed up for a customer account${email ? ` as ${email}` : ""}`;
  },
  "customer.delete": () => "Deleted the customer's account",
  "customer.records_anonymised": (_f, b) => `Removed the deleted customer's name, address and treatment places from the application records${formatAuditDay(b.keptUntil) ? `, kept until ${formatAuditDay(b.keptUntil)}` : ""}`,
  "customer.records_hold_extended": (_f, b, a) => {
    const until = formatAuditDay(a.keptUntil);
    const was = formatAuditDay(b.keptUntil);
    return `Kept the deleted customer's application-record details longer${until ? ` (until ${until}${was ? `, was ${was}` : ""})` : ""}, as the record retention was raised`;
  },
  "crew.create": (_f, _b, a) => {
    const name = text(a.name);
    return `Added the crew${name ? ` ${name}` : ""}${a.active === false ? " (inactive)" : ""}`;
  },
  "crew.update": (_f, b, a) => {
    const name = text(a.name) ?? text(b.name);
    const crew = `the crew${name ? ` ${name}` : ""}`;
    if (b.active === true && a.active === false) return `Set ${crew} inactive`;
    if (b.active === false && a.active === true) return `Set ${crew} active again`;
    // In the form's order (stored entries come back with their keys in the database's order).
    const order = Object.keys(CREW_FIELD_NAMES);
    const keys = changedKeys(b, a).sort((x, y) => (order.indexOf(x) + 1 || 99) - (order.indexOf(y) + 1 || 99));
    const changed = [...new Set(keys.map((k) => CREW_FIELD_NAMES[k] ?? humanise(k).toLowerCase()))];
    return changed.length > 0 ? `Changed ${crew}: ${changed.join(", ")}` : `Saved ${crew} without changes`;
  },
  "service_day.close": (f, _b, a) => withReason(`Closed ${formatAuditDay(f.entityId) ?? "the day"}${movedText(a.moved)}`, a.note),
  "service_day.reopen": (f) => `Reopened ${formatAuditDay(f.entityId) ?? "the day"}`,
  "service_day.capacity": (f, b, a) => {
    const day = formatAuditDay(f.entityId) ?? "the day";
    const to = count(a.capacity);
    const from = count(b.capacity);
    const sentence =
      to === null
        ? `Set ${day} back to the crews' estimate${from !== null ? ` (was ${plural(from, "colony", "colonies")})` : ""}`
        : `Set the capacity of ${day} to ${plural(to, "colony", "colonies")}${from !== null ? ` (was ${from})` : ""}`;
    return withReason(`${sentence}${movedText(a.moved)}`, a.note);
  },
  "crew_day.close": (f, _b, a) => withReason(`Closed ${text(a.crewName) ?? "a crew"}'s day on ${formatAuditDay(f.entityId) ?? "the day"}${movedText(a.moved)}`, a.note),
  "crew_day.reopen": (f, _b, a) => `Reopened ${text(a.crewName) ?? "a crew"}'s day on ${formatAuditDay(f.entityId) ?? "the day"}`,
  "user.profile": (_f, b, a) => {
    const changed = changedKeys(b, a).map((k) => (k === "name" ? "name" : k === "phone" ? "phone number" : humanise(k).toLowerCase()));
    return changed.length ? `Changed their ${changed.join(" and ")} on their profile` : "Saved their profile";
  },
  "user.password_change": (_f, _b, a) => {
    const ended = count(a.otherSessionsEnded);
    const sentence = "Changed their password on their profile";
    return ended !== null && ended > 0 ? `${sentence}, signing out ${plural(ended, "other session")}` : sentence;
  },
  "user.password_reset": () => "Reset their password with a link e-mailed to them",
  "user.email_change": (_f, b, a) => {
    const from = text(b.email);
    const to = text(a.email);
    return `Changed their e-mail address${from ? ` from ${from}` : ""}${to ? ` to ${to}` : ""}, confirmed by a link sent to the new address`;
  },
  "staff.invite": (_f, _b, a) => {
    const who = text(a.name) ?? text(a.email) ?? "someone";
    const email = text(a.name) ? text(a.email) : null;
    const role = text(a.role);
    return `Invited ${who}${email ? ` (${email})` : ""} to join the staff${role ? ` as ${roleName(role).toLowerCase()}` : ""}`;
  },
  "staff.invite_resent": (_f, _b, a) => {
    const email = text(a.email);
    return `Sent the staff invitation${email ? ` to ${email}` : ""} again, with a new link`;
  },
  "staff.invite_revoked": (_f, _b, a) => {
    const email = text(a.email);
    return `Withdrew the staff invitation${email ? ` to ${email}` : ""}`;
  },
  "staff.invite_accepted": (_f, _b, a) => {
    const role = text(a.role);
    return `Accepted the staff invitation and joined${role ? ` as ${roleName(role).toLowerCase()}` : ""}`;
  },
  "staff.role": (_f, b, a) => {
    const who = text(a.name) ?? text(b.name);
    const from = text(b.role);
    const to = text(a.role);
    return `Changed ${who ? `${who}'s` : "a staff"} role${from ? ` from ${roleName(from).toLowerCase()}` : ""}${to ? ` to ${roleName(to).toLowerCase()}` : ""}`;
  },
  "staff.deactivate": (_f, b, a) => {
    const who = text(a.name) ?? text(b.name);
    const ended = count(a.sessionsEnded);
    const sentence = `Deactivated ${who ? `${who}'s` : "a staff"} account`;
    return ended !== null && ended > 0 ? `${sentence} and signed them out of ${plural(ended, "session")}` : sentence;
  },
  "staff.reactivate": (_f, b, a) => {
    const who = text(a.name) ?? text(b.name);
    return `Reactivated ${who ? `${who}'s` : "a staff"} account`;
  },
};

/** A plain sentence for an audit entry, e.g. "Recorded a cheque payment of $40.00 on invoice 2026-0012". */
export function describeAuditEntry(facts: AuditFacts): string {
  const describe = SENTENCES[facts.action];
  const before = record(facts.before);
  const after = record(facts.after);
  if (describe) return describe(facts, before, after);
  const [, verb = facts.action] = facts.action.split(/\.(.+)/);
  return `${humanise(verb)} (${humanise(facts.entityType).toLowerCase()} ${facts.entityId})`;
}

// ---------------------------------------------------------------------------------------
// The record an entry concerns

/** What the model found out about an entry's record (all optional). */
export type AuditEntityFacts = {
  invoiceId?: number | null;
  invoiceNumber?: string | null;
  /** The visit to open for a visit or booking (a booking's first round). */
  visitId?: number | null;
  yardId?: number | null;
  yardName?: string | null;
  /** A run's or a service day's date. */
  serviceDate?: string | null;
  crewName?: string | null;
  colonyLabel?: string | null;
  userName?: string | null;
};

export type AuditEntityLink = { label: string; href: string | null };

const NUMERIC = /^\d+$/;

/**
 * The record an entry concerns, as a label and a link to its page where it has one: invoices
 * (and the payments and refunds on them) in the office, visits, yards and days in dispatch.
 */
export function auditEntityLink(entityType: string, entityId: string, facts: AuditEntityFacts = {}): AuditEntityLink {
  const id = entityId;
  const numeric = NUMERIC.test(id);
  const invoiceHref = facts.invoiceId ? `/office/invoices/${facts.invoiceId}` : null;
  const yardHref = facts.yardId ? `/dispatch/yards/${facts.yardId}` : null;
  const dayHref = (date: string | null | undefined) => (date && ISO_DATE.test(date) ? `/dispatch/days/${date}` : null);
  switch (entityType) {
    case "invoice":
      return { label: `Invoice ${facts.invoiceNumber ?? `#${id}`}`, href: numeric ? `/office/invoices/${id}` : null };
    case "payment":
      return { label: `Payment #${id}${facts.invoiceNumber ? ` on invoice ${facts.invoiceNumber}` : ""}`, href: invoiceHref };
    case "refund":
      return { label: `Refund #${id}${facts.invoiceNumber ? ` on invoice ${facts.invoiceNumber}` : ""}`, href: invoiceHref };
    case "visit":
      return { label: `Visit #${id}${facts.yardName ? ` at ${facts.yardName}` : ""}`, href: numeric ? `/dispatch/visits/${id}` : null };
    case "booking":
      return { label: `Booking #${id}${facts.yardName ? ` at ${facts.yardName}` : ""}`, href: facts.visitId ? `/dispatch/visits/${facts.visitId}` : null };
    case "course":
      return { label: `Course #${id}${facts.yardName ? ` at ${facts.yardName}` : ""}`, href: yardHref };
    case "yard":
      return { label: `Yard ${facts.yardName ?? `#${id}`}`, href: numeric ? `/dispatch/yards/${id}` : null };
    case "colony":
      return { label: `Colony ${facts.colonyLabel ?? `#${id}`}${facts.yardName ? ` at ${facts.yardName}` : ""}`, href: yardHref };
    case "run": {
      const day = formatAuditDay(facts.serviceDate);
      const whose = facts.crewName ? `${facts.crewName}'s run` : `Run #${id}`;
      return { label: day ? `${whose}, ${day}` : whose, href: dayHref(facts.serviceDate) };
    }
    case "service_day":
      return { label: `Day ${formatAuditDay(id) ?? id}`, href: dayHref(id) };
    case "crew":
      return { label: facts.crewName ? `Crew ${facts.crewName}` : `Crew #${id}`, href: numeric ? `/dispatch/crews/${id}` : null };
    case "settings":
      return { label: "Business settings", href: "/dispatch/settings" };
    case "user":
      return { label: facts.userName ? `Account of ${facts.userName}` : `Account #${id}`, href: null };
    case "customer_import":
      return { label: "Customer import", href: null };
    default:
      return { label: `${humanise(entityType)} ${id}`, href: null };
  }
}

// ---------------------------------------------------------------------------------------
// Details: before → after

export type AuditFieldChange = { label: string; before: string | null; after: string | null };

const MAX_VALUE_LENGTH = 240;

function clip(value: string): string {
  return value.length > MAX_VALUE_LENGTH ? `${value.slice(0, MAX_VALUE_LENGTH - 1)}…` : value;
}

function scalarText(key: string, value: unknown, timeZone: string): string {
  if (value === null || value === undefined) return "none";
  if (typeof value === "boolean") return value ? "yes" : "no";
  if (typeof value === "number") {
    if (/cents$/i.test(key) && Number.isSafeInteger(value) && value >= 0) return formatDollars(value);
    if (/basis_?points$/i.test(key)) return `${(value / 100).toLocaleString("en-US", { maximumFractionDigits: 2 })} %`;
    if (/^(position)$/i.test(key) && Number.isInteger(value)) return String(value + 1);
    return value.toLocaleString("en-US", { maximumFractionDigits: 4 });
  }
  if (typeof value === "string") {
    if (ISO_DATE.test(value)) return formatAuditDay(value) ?? value;
    if (ISO_INSTANT.test(value) && !Number.isNaN(Date.parse(value))) return formatAuditTime(value, timeZone);
    return value;
  }
  return String(value);
}

function compactText(key: string, value: unknown, timeZone: string): string {
  if (Array.isArray(value)) {
    if (value.length === 0) return "none";
    return value.map((item) => compactText(key, item, timeZone)).join(item0IsObject(value) ? "; " : ", ");
  }
  if (value !== null && typeof value === "object") {
    const entries = Object.entries(value as Json);
    if (entries.length === 0) return "none";
    return entries.map(([k, v]) => `${humanise(k).toLowerCase()} ${compactText(k, v, timeZone)}`).join(", ");
  }
  return scalarText(key, value, timeZone);
}

function item0IsObject(list: unknown[]): boolean {
  return list.length > 0 && list[0] !== null && typeof list[0] === "object";
}

/** A field's name for the details: the settings page's words, else the key in words (units left to the value). */
function fieldLabel(key: string): string {
  const setting = SETTING_NAMES[key];
  if (setting) return setting.charAt(0).toUpperCase() + setting.slice(1);
  const words = humanise(key).replace(/ (cents|basis points)$/i, "");
  return words || key;
}

/** One level of nesting becomes "Parent · field" rows; deeper values are written out compactly. */
function flatten(value: Json, timeZone: string): Map<string, { label: string; text: string }> {
  const out = new Map<string, { label: string; text: string }>();
  for (const [key, v] of Object.entries(value)) {
    if (v !== null && typeof v === "object" && !Array.isArray(v) && Object.keys(v).length > 0) {
      for (const [child, cv] of Object.entries(v as Json)) {
        out.set(`${key}.${child}`, { label: `${fieldLabel(key)} · ${fieldLabel(child).toLowerCase()}`, text: clip(compactText(child, cv, timeZone)) });
      }
      continue;
    }
    out.set(key, { label: fieldLabel(key), text: clip(compactText(key, v, timeZone)) });
  }
  return out;
}

/**
 * An entry's fields as label, before and after text. When there is both a before and an after,
 * only the fields that changed (all of them when none did); otherwise every field there is.
 */
export function auditFieldChanges(before: unknown, after: unknown, timeZone = "UTC"): AuditFieldChange[] {
  const hasBefore = before !== null && before !== undefined && typeof before === "object";
  const hasAfter = after !== null && after !== undefined && typeof after === "object";
  const b = flatten(record(before), timeZone);
  const a = flatten(record(after), timeZone);
  const keys = [...new Set([...b.keys(), ...a.keys()])];
  const rows = keys.map((key) => ({
    label: (a.get(key) ?? b.get(key))!.label,
    before: hasBefore ? (b.get(key)?.text ?? null) : null,
    after: hasAfter ? (a.get(key)?.text ?? null) : null,
  }));
  if (hasBefore && hasAfter) {
    const changed = rows.filter((r) => r.before !== r.after);
    return changed.length > 0 ? changed : rows;
  }
  return rows;
}

// ---------------------------------------------------------------------------------------
// The page's filters (a GET form; each field checked on its own, so one bad field keeps the rest)

export const AUDIT_PAGE_SIZE = 50;
export const AUDIT_SORTS = ["newest", "oldest"] as const;
export type AuditSort = (typeof AUDIT_SORTS)[number];
export const MAX_AUDIT_SEARCH = 100;

const optionalDate = (message: string) =>
  z
    .string()
    .trim()
    .refine((v) => v === "" || (ISO_DATE.test(v) && !Number.isNaN(Date.parse(`${v}T00:00:00Z`)) && new Date(`${v}T00:00:00Z`).toISOString().startsWith(v)), { error: message })
    .transform((v) => (v === "" ? null : v));

/** The area filter's choices: every area, or all of them. */
export const AUDIT_AREA_CHOICES = ["all", ...AUDIT_AREAS] as const;

export const auditQueryFields = {
  q: z.string().trim().max(MAX_AUDIT_SEARCH, { error: `Keep the search to ${MAX_AUDIT_SEARCH} characters or fewer.` }),
  area: z.enum(AUDIT_AREA_CHOICES, { error: "Choose an area from the list." }),
  actor: z
    .string()
    .trim()
    .regex(/^(all|system|[1-9]\d{0,11})$/, { error: "Choose a person from the list." })
    .transform((v): "all" | "system" | number => (v === "all" || v === "system" ? v : Number(v))),
  from: optionalDate("Enter the first day as a date, e.g. 2026-11-30."),
  to: optionalDate("Enter the last day as a date, e.g. 2026-11-30."),
  sort: z.enum(AUDIT_SORTS, { error: "Choose newest first or oldest first." }),
  page: z.string().trim().regex(/^[1-9]\d{0,8}$/).transform(Number),
};

export type AuditQuery = {
  search: string;
  area: AuditArea | "all";
  actor: "all" | "system" | number;
  from: string | null;
  to: string | null;
  sort: AuditSort;
  page: number;
};

export const AUDIT_QUERY_DEFAULTS: AuditQuery = { search: "", area: "all", actor: "all", from: null, to: null, sort: "newest", page: 1 };

export type AuditQueryParse = {
  query: AuditQuery;
  /** Messages by field name (q, area, actor, from, to, sort); the field's filter is left out. */
  errors: Partial<Record<"q" | "area" | "actor" | "from" | "to" | "sort", string>>;
  /** What was typed, to show back in the form. */
  values: Record<"q" | "area" | "actor" | "from" | "to" | "sort", string>;
};

/** The filters from the page's URL; a bad field gets a message and is left out, the page number falls back to 1. */
export function parseAuditQuery(params: URLSearchParams): AuditQueryParse {
  const raw = (name: string) => params.get(name) ?? "";
  const values = { q: raw("q"), area: raw("area") || "all", actor: raw("actor") || "all", from: raw("from"), to: raw("to"), sort: raw("sort") || "newest" };
  const errors: AuditQueryParse["errors"] = {};
  const query: AuditQuery = { ...AUDIT_QUERY_DEFAULTS };
  const field = <K extends keyof typeof auditQueryFields>(name: K, value: string) => {
    const parsed = auditQueryFields[name].safeParse(value);
    if (parsed.success) return parsed.data as z.output<(typeof auditQueryFields)[K]>;
    if (name !== "page") errors[name as keyof AuditQueryParse["errors"]] = parsed.error.issues[0]?.message ?? "Check this field.";
    return undefined;
  };
  const q = field("q", values.q);
  if (q !== undefined) query.search = q;
  const area = field("area", values.area);
  if (area !== undefined) query.area = area;
  const actor = field("actor", values.actor);
  if (actor !== undefined) query.actor = actor;
  const from = field("from", values.from);
  if (from !== undefined) query.from = from;
  const to = field("to", values.to);
  if (to !== undefined) query.to = to;
  const sort = field("sort", values.sort);
  if (sort !== undefined) query.sort = sort;
  const page = raw("page") ? field("page", raw("page")) : undefined;
  if (page !== undefined) query.page = page;
  if (query.from && query.to && query.from > query.to) {
    errors.to = "The last day is before the first day.";
    query.to = null;
  }
  return { query, errors, values };
}
