import { describe, expect, it } from "vitest";
import {
  AUDIT_AREAS,
  auditAreaOf,
  auditEntityLink,
  auditFieldChanges,
  describeAuditEntry,
  formatAuditTime,
  humanise,
  parseAuditQuery,
  systemActorName,
  type AuditFacts,
} from "~/domain/audit-descriptions";

// Varroute's own wording of its audit codes; the expected sentences are written by hand
// from the entry shapes the model functions store (app/models/*.server.ts).

const entry = (action: string, after: unknown, more: Partial<AuditFacts> = {}): AuditFacts => ({
  action,
  entityType: more.entityType ?? action.split(".")[0],
  entityId: more.entityId ?? "7",
  before: more.before ?? null,
  after,
  invoiceNumber: more.invoiceNumber,
});

describe("describeAuditEntry", () => {
  it("says what an office payment was, with the invoice number the model looked up", () => {
    expect(describeAuditEntry(entry("payment.record", { invoiceId: 3, amountCents: 4000, method: "cheque", reference: null }, { invoiceNumber: "2026-0012" }))).toBe(
      "Recorded a cheque payment of $40.00 on invoice 2026-0012",
    );
    expect(describeAuditEntry(entry("payment.record", { invoiceId: 3, amountCents: 123456, method: "cash", reference: "Receipt 88" }, { invoiceNumber: "2026-0013" }))).toBe(
      "Recorded a cash payment of $1,234.56 on invoice 2026-0013 (reference Receipt 88)",
    );
  });

  it("words card payments, refunds and invoice status changes", () => {
    expect(describeAuditEntry(entry("payment.card", { invoiceId: 1, amountCents: 9900, via: "checkout.session.completed" }, { invoiceNumber: "2026-0001" }))).toBe(
      "Received a card payment of $99.00 on invoice 2026-0001",
    );
    expect(describeAuditEntry(entry("refund.record", { paymentId: 4, method: "cash", amountCents: 1500, reason: "Overcharged" }, { invoiceNumber: "2026-0002" }))).toBe(
      "Refunded $15.00 of a cash payment on invoice 2026-0002: Overcharged",
    );
    expect(describeAuditEntry(entry("refund.card", { paymentId: 4, amountCents: 250, stripeRefundId: "re_1", reason: "Goodwill" }, { invoiceNumber: "2026-0003" }))).toBe(
      "Refunded $2.50 to the card on invoice 2026-0003: Goodwill",
    );
    expect(describeAuditEntry(entry("invoice.status", { status: "paid", totalCents: 100 }, { before: { status: "open" }, invoiceNumber: "2026-0004" }))).toBe(
      "Invoice 2026-0004 went from open to paid",
    );
  });

  it("words the invoice's life: created, e-mailed, resent, voided", () => {
    expect(describeAuditEntry(entry("invoice.create", { number: "2026-0100", coloniesTreated: 6, totalCents: 19980 }))).toBe(
      "Created invoice 2026-0100 for $199.80 (6 colonies treated)",
    );
    expect(describeAuditEntry(entry("invoice.email_queued", { number: "2026-0100", to: "ann@example.test" }))).toBe("Queued invoice 2026-0100 for e-mail to ann@example.test");
    expect(describeAuditEntry(entry("invoice.email_resent", { number: "2026-0100", to: "ann@example.test" }))).toBe("Resent invoice 2026-0100 to ann@example.test");
    expect(describeAuditEntry(entry("invoice.void", { status: "void", reason: "Duplicate" }, { invoiceNumber: "2026-0101" }))).toBe("Voided invoice 2026-0101: Duplicate");
    // Without a number anywhere, the record's id stands in.
    expect(describeAuditEntry(entry("invoice.void", { status: "void" }, { entityId: "55" }))).toBe("Voided invoice #55");
  });

  it("words bookings and visit changes with the days written out", () => {
    // 2026-11-10 is a Tuesday.
    expect(describeAuditEntry(entry("booking.create", { yardId: 1, serviceDate: "2026-11-10", colonies: 4, rounds: 3 }))).toBe("Booked 4 colonies for Tue, Nov 10, 2026 (3 rounds)");
    expect(describeAuditEntry(entry("booking.create", { yardId: 1, serviceDate: "2026-11-10", colonies: 1, rounds: 1 }))).toBe("Booked 1 colony for Tue, Nov 10, 2026");
    expect(describeAuditEntry(entry("visit.reschedule", { serviceDate: "2026-11-12", reason: "Rain" }, { before: { serviceDate: "2026-11-10" } }))).toBe(
      "Moved the visit from Tue, Nov 10, 2026 to Thu, Nov 12, 2026: Rain",
    );
    expect(describeAuditEntry(entry("visit.cancel", { status: "cancelled", reason: "Hives sold" }, { before: { status: "scheduled", serviceDate: "2026-11-10" } }))).toBe(
      "Cancelled the visit on Tue, Nov 10, 2026: Hives sold",
    );
    expect(describeAuditEntry(entry("visit.next_round", { roundNumber: 2, serviceDate: "2026-11-17", status: "scheduled" }))).toBe("Booked round 2 for Tue, Nov 17, 2026");
    expect(describeAuditEntry(entry("visit.time_of_day", { timePreference: "morning", takenOffRun: true }, { before: { timePreference: "any" } }))).toBe(
      "Changed the visit's time of day from any time to the morning, and took it off its run",
    );
    expect(describeAuditEntry(entry("visit.time_of_day", { timePreference: "afternoon", takenOffRun: false }, { before: { timePreference: "morning" } }))).toBe(
      "Changed the visit's time of day from the morning to the afternoon",
    );
  });

  it("words planning, moving, locking and publishing with positions counted from 1", () => {
    expect(
      describeAuditEntry(
        entry("service_day.plan", { crews: [{ crewId: 1, runId: 2, stops: 3, colonies: 12 }, { crewId: 2, runId: 3, stops: 0, colonies: 0 }], deferred: [{ visitId: 9 }] }, { entityType: "service_day", entityId: "2026-11-10" }),
      ),
    ).toBe("Planned Tue, Nov 10, 2026: 3 stops on 1 run, 1 deferred");
    expect(describeAuditEntry(entry("stop.move", { runId: 2, crewId: 1, position: 0 }, { before: { runId: 2, crewId: 1, position: 2 } }))).toBe("Moved the stop to position 1 on its run");
    expect(describeAuditEntry(entry("stop.move", { runId: 3, crewId: 2, position: 1 }, { before: { runId: 2, crewId: 1, position: 0 } }))).toBe("Moved the stop to another crew's run, position 2");
    expect(describeAuditEntry(entry("stop.move", { runId: 3, crewId: 2, position: 4 }, { before: { status: "deferred" } }))).toBe("Put the visit on a run at position 5");
    expect(describeAuditEntry(entry("stop.lock", { locked: true, position: 1 }))).toBe("Locked the stop to its crew at position 2");
    expect(describeAuditEntry(entry("run.publish", { status: "published", version: 2, stops: 5, service_date: "2026-12-01" }))).toBe("Published the run for Tue, Dec 1, 2026 to the crew with 5 stops (version 2)");
  });

  it("words the crew's field work", () => {
    expect(describeAuditEntry(entry("tally.record", { colonyLabel: "H2", outcome: "treated", doseGrams: 2, mites: 9, beesSampled: 300 }))).toBe(
      "Recorded colony H2 as treated with 2 g; 9 mites in 300 bees",
    );
    expect(describeAuditEntry(entry("tally.record", { colonyLabel: "H3", outcome: "skipped", skipReason: "dead_out", doseGrams: 0 }))).toBe("Recorded colony H3 as skipped (dead-out)");
    expect(describeAuditEntry(entry("tally.change", { colonyLabel: "H3", outcome: "treated", doseGrams: 1 }, { before: { colonyLabel: "H3", outcome: "skipped" } }))).toBe(
      "Changed colony H3 from skipped to treated",
    );
    expect(describeAuditEntry(entry("visit.finish", { treated: 3, skipped: 1, grams: 4.5, invoiceNumber: "2026-0200" }))).toBe(
      "Finished the visit: 3 treated, 1 skipped, 4.5 g applied; invoice 2026-0200",
    );
  });

  it("lists the settings that changed, by their names on the settings page", () => {
    const before = { doseGramsPerBroodBox: 1, pricePerColonyCents: 2500, timeZone: "America/New_York" };
    expect(describeAuditEntry(entry("settings.update", { ...before, pricePerColonyCents: 2600, timeZone: "America/Chicago" }, { before }))).toBe(
      "Changed the business settings: price per colony, time zone",
    );
    expect(describeAuditEntry(entry("settings.update", before))).toBe("Saved the business settings for the first time");
  });

  it("still says something for a code it does not know", () => {
    expect(describeAuditEntry(entry("colony.split_hive", { a: 1 }, { entityType: "colony", entityId: "27" }))).toBe("Split hive (colony 27)");
  });
});

describe("areas, actors and records", () => {
  it("puts each action of the write paths in its plain area", () => {
    const expected: Record<string, string> = {
      "booking.create": "bookings",
      "visit.reschedule": "bookings",
      "visit.cancel": "bookings",
      "visit.next_round": "bookings",
      "visit.time_of_day": "bookings",
      "course.complete": "bookings",
      "service_day.plan": "runs",
      "run.plan": "runs",
      "stop.move": "runs",
      "stop.lock": "runs",
      "run.publish": "runs",
      "run.safety_check": "runs",
      "visit.supers_off": "tallies",
      "tally.record": "tallies",
      "tally.change": "tallies",
      "visit.finish": "tallies",
      "invoice.create": "invoices",
      "invoice.void": "invoices",
      "invoice.reminder_queued": "invoices",
      "payment.card": "payments",
      "payment.record": "payments",
      "refund.card": "payments",
      "refund.record": "payments",
      "settings.update": "settings",
      "yard.create": "customers",
      "customers.import": "customers",
      "customer.sign_up": "customers",
      "customer.delete": "customers",
      "visit.something_new": "other",
    };
    for (const [action, area] of Object.entries(expected)) expect([action, auditAreaOf(action)]).toEqual([action, area]);
    expect(AUDIT_AREAS).toContain("other");
  });

  it("names Stripe for what its webhooks record and the system otherwise", () => {
    expect(systemActorName("payment.card")).toBe("Stripe");
    expect(systemActorName("refund.card")).toBe("Stripe");
    expect(systemActorName("invoice.status")).toBe("Stripe");
    expect(systemActorName("invoice.email_queued")).toBe("System");
    expect(systemActorName("invoice.checkout_session")).toBe("System");
  });

  it("links each record to its page where it has one", () => {
    expect(auditEntityLink("invoice", "12", { invoiceNumber: "2026-0012" })).toEqual({ label: "Invoice 2026-0012", href: "/office/invoices/12" });
    expect(auditEntityLink("payment", "4", { invoiceId: 12, invoiceNumber: "2026-0012" })).toEqual({ label: "Payment #4 on invoice 2026-0012", href: "/office/invoices/12" });
    expect(auditEntityLink("visit", "31", { yardName: "Ridge" })).toEqual({ label: "Visit #31 at Ridge", href: "/dispatch/visits/31" });
    expect(auditEntityLink("booking", "5", { visitId: 31, yardName: "Ridge" })).toEqual({ label: "Booking #5 at Ridge", href: "/dispatch/visits/31" });
    expect(auditEntityLink("yard", "8", { yardName: "Ridge" })).toEqual({ label: "Yard Ridge", href: "/dispatch/yards/8" });
    expect(auditEntityLink("service_day", "2026-11-10")).toEqual({ label: "Day Tue, Nov 10, 2026", href: "/dispatch/days/2026-11-10" });
    expect(auditEntityLink("run", "3", { serviceDate: "2026-11-10", crewName: "Crew North" })).toEqual({ label: "Crew North's run, Tue, Nov 10, 2026", href: "/dispatch/days/2026-11-10" });
    expect(auditEntityLink("run", "3")).toEqual({ label: "Run #3", href: null });
    expect(auditEntityLink("customer_import", "0b7c")).toEqual({ label: "Customer import", href: null });
  });
});

describe("auditFieldChanges", () => {
  it("shows only what changed when there is a before and an after, in readable units", () => {
    const changes = auditFieldChanges({ pricePerColonyCents: 2500, taxRateBasisPoints: 800, unitSystem: "us" }, { pricePerColonyCents: 2600, taxRateBasisPoints: 888, unitSystem: "us" });
    expect(changes).toEqual([
      { label: "Price per colony", before: "$25.00", after: "$26.00" },
      { label: "Tax rate", before: "8 %", after: "8.88 %" },
    ]);
  });

  it("shows every field of a new record, nested objects as their own rows, lists written out", () => {
    const changes = auditFieldChanges(null, { number: "2026-0100", totalCents: 5400, prices: { tripFeeCents: 3500 }, stops: [4, 9], paid: false });
    expect(changes).toEqual([
      { label: "Number", before: null, after: "2026-0100" },
      { label: "Total", before: null, after: "$54.00" },
      { label: "Prices · trip fee", before: null, after: "$35.00" },
      { label: "Stops", before: null, after: "4, 9" },
      { label: "Paid", before: null, after: "no" },
    ]);
  });

  it("writes instants on the business's clock and service days as dates", () => {
    const [at, day] = auditFieldChanges(null, { supersConfirmedAt: "2026-11-10T14:05:00.000Z", serviceDate: "2026-11-10" }, "America/New_York");
    // 14:05 UTC is 9:05 AM in New York in November (EST, UTC−5).
    expect(at).toEqual({ label: "Supers confirmed at", before: null, after: "Nov 10, 2026, 9:05 AM EST" });
    expect(day.after).toBe("Tue, Nov 10, 2026");
  });
});

describe("formatAuditTime and humanise", () => {
  it("gives the zone with the time", () => {
    // 2026-07-01 16:30 UTC is 12:30 PM in New York (EDT, UTC−4) and 9:30 AM in Los Angeles (PDT, UTC−7).
    expect(formatAuditTime("2026-07-01T16:30:00Z", "America/New_York")).toBe("Jul 1, 2026, 12:30 PM EDT");
    expect(formatAuditTime(new Date("2026-07-01T16:30:00Z"), "America/Los_Angeles")).toBe("Jul 1, 2026, 9:30 AM PDT");
  });

  it("turns field names into words", () => {
    expect(humanise("stripePaymentIntentId")).toBe("Stripe payment intent ID");
    expect(humanise("service_date")).toBe("Service date");
  });
});

describe("parseAuditQuery", () => {
  const parse = (search: string) => parseAuditQuery(new URLSearchParams(search));

  it("reads every filter", () => {
    expect(parse("q=cheque&area=payments&actor=12&from=2026-11-01&to=2026-11-30&sort=oldest&page=3")).toEqual({
      query: { search: "cheque", area: "payments", actor: 12, from: "2026-11-01", to: "2026-11-30", sort: "oldest", page: 3 },
      errors: {},
      values: { q: "cheque", area: "payments", actor: "12", from: "2026-11-01", to: "2026-11-30", sort: "oldest" },
    });
    expect(parse("actor=system").query.actor).toBe("system");
    expect(parse("").query).toEqual({ search: "", area: "all", actor: "all", from: null, to: null, sort: "newest", page: 1 });
  });

  it("puts a message at each bad field, leaves that filter out and keeps the others", () => {
    const result = parse(`q=${"x".repeat(101)}&area=garden&actor=bob&from=2026-02-30&to=yesterday&sort=sideways&page=-2`);
    expect(Object.keys(result.errors).sort()).toEqual(["actor", "area", "from", "q", "sort", "to"]);
    expect(result.errors.from).toMatch(/date/);
    expect(result.query).toEqual({ search: "", area: "all", actor: "all", from: null, to: null, sort: "newest", page: 1 });
    expect(result.values.area).toBe("garden");

    const mixed = parse("q=void&area=garden");
    expect(mixed.query.search).toBe("void");
    expect(Object.keys(mixed.errors)).toEqual(["area"]);
  });

  it("refuses a last day before the first at the last day", () => {
    const result = parse("from=2026-11-30&to=2026-11-01");
    expect(result.errors.to).toMatch(/before the first day/);
    expect(result.query.from).toBe("2026-11-30");
    expect(result.query.to).toBeNull();
  });
});
