import type { Knex } from "knex";
import { formatInvoiceNumber, invoiceForVisit } from "~/domain/billing";
import { addCalendarDays, isIsoDate } from "~/domain/courses";
import { loadBusinessSettings } from "./settings.server";

// Creating the invoice of a finished visit, inside the caller's transaction (finishing a
// visit calls it; so may a billing job). Numbers are gap-free per year: the year's row in
// invoice_sequences is locked and incremented in the same transaction that inserts the
// invoice, so a rolled-back transaction gives its number back and two transactions never
// take the same one. E-mailing, the PDF and payment belong to the billing side.

export type CreatedInvoice = {
  invoiceId: number;
  number: string;
  /** False when the visit already had a live (not void) invoice, which is returned. */
  created: boolean;
  totalCents: number;
};

export class InvoiceRefused extends Error {
  constructor(message: string) {
    super(message);
    this.name = "InvoiceRefused";
  }
}

/** Takes the next invoice number of a year; the sequence row stays locked until the transaction ends. */
export async function takeInvoiceNumber(trx: Knex.Transaction, year: number): Promise<{ sequence: number; number: string }> {
  await trx("invoice_sequences").insert({ year, last_number: 0 }).onConflict("year").ignore();
  const row = await trx("invoice_sequences").where({ year }).forUpdate().first("last_number");
  const sequence = row!.last_number + 1;
  await trx("invoice_sequences").where({ year }).update({ last_number: sequence });
  return { sequence, number: formatInvoiceNumber(year, sequence) };
}

/**
 * The invoice of a finished visit, from its tally (colonies treated) and the prices in
 * settings, due `paymentTermsDays` after `issuedOn`. Returns the visit's live invoice
 * instead when it has one already. Must run in a transaction (the caller's).
 */
export async function createInvoiceForVisit(
  trx: Knex.Transaction,
  input: { visitId: number; issuedOn: string; actorUserId?: number | null },
): Promise<CreatedInvoice> {
  if (!trx.isTransaction) throw new TypeError("createInvoiceForVisit must run inside a transaction");
  if (!isIsoDate(input.issuedOn)) throw new RangeError(`issuedOn must be YYYY-MM-DD, got ${JSON.stringify(input.issuedOn)}`);

  // The visit's row lock makes "one live invoice per visit" a matter of waiting, not of
  // failing on the unique index.
  const visit = await trx("visits")
    .join("yards", "yards.id", "visits.yard_id")
    .join("courses", "courses.id", "visits.course_id")
    .where("visits.id", input.visitId)
    .forUpdate("visits")
    .first("visits.id", "visits.status", "visits.round_number", "courses.rounds_planned", "yards.name as yard_name", "yards.customer_id");
  if (!visit) throw new InvoiceRefused(`There is no visit ${input.visitId}.`);

  const existing = await trx("invoices").where({ visit_id: visit.id }).whereNot({ status: "void" }).first("id", "number", "total_cents");
  if (existing) return { invoiceId: existing.id, number: existing.number, created: false, totalCents: existing.total_cents };
  if (visit.status !== "done") throw new InvoiceRefused("Only a finished visit is invoiced.");

  const settings = await loadBusinessSettings(trx);
  const treated = await trx("tallies").where({ visit_id: visit.id, outcome: "treated" }).first(trx.raw("count(*)::int as n"));
  const coloniesTreated = (treated as unknown as { n: number }).n;
  const draft = invoiceForVisit(
    {
      coloniesTreated,
      pricePerColonyCents: settings.pricePerColonyCents,
      tripFeeCents: settings.tripFeeCents,
      minimumPerVisitCents: settings.minimumPerVisitCents,
      taxRateBasisPoints: settings.taxRateBasisPoints,
    },
    { yardName: visit.yard_name, roundNumber: visit.round_number, roundsPlanned: visit.rounds_planned },
  );

  const year = Number(input.issuedOn.slice(0, 4));
  const { sequence, number } = await takeInvoiceNumber(trx, year);
  const [invoice] = await trx("invoices")
    .insert({
      year,
      sequence,
      number,
      customer_id: visit.customer_id,
      visit_id: visit.id,
      status: "open",
      issued_on: input.issuedOn,
      due_on: addCalendarDays(input.issuedOn, settings.paymentTermsDays),
      subtotal_cents: draft.subtotalCents,
      tax_cents: draft.taxCents,
      total_cents: draft.totalCents,
      currency: "usd",
    })
    .returning("id");
  const invoiceId = Number(invoice.id);
  if (draft.lines.length > 0) {
    await trx("invoice_lines").insert(
      draft.lines.map((line, i) => ({
        invoice_id: invoiceId,
        position: i + 1,
        kind: line.kind,
        description: line.description,
        quantity: line.quantity,
        unit_cents: line.unitCents,
        amount_cents: line.amountCents,
      })),
    );
  }
  await trx("audit_log").insert({
    actor_user_id: input.actorUserId ?? null,
    action: "invoice.create",
    entity_type: "invoice",
    entity_id: String(invoiceId),
    after: JSON.stringify({
      number,
      visitId: visit.id,
      customerId: visit.customer_id,
      coloniesTreated,
      subtotalCents: draft.subtotalCents,
      taxCents: draft.taxCents,
      totalCents: draft.totalCents,
      prices: {
        pricePerColonyCents: settings.pricePerColonyCents,
        tripFeeCents: settings.tripFeeCents,
        minimumPerVisitCents: settings.minimumPerVisitCents,
        taxRateBasisPoints: settings.taxRateBasisPoints,
      },
    }),
  });
  return { invoiceId, number, created: true, totalCents: draft.totalCents };
}
