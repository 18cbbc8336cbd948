import type { Knex } from "knex";
import { mailFrom } from "~/services/mail.server";
import { businessIdentity, loadBusinessSettings } from "./settings.server";
import type { InvoiceLineRow, InvoiceRow, PaymentRow } from "./tables";

// Everything the invoice PDF and the invoice e-mail show about one invoice, read in one
// place: the invoice with its lines, the customer, the visit (yard, date, round), and the
// payments so far net of refunds. Amounts are integer cents.

export type InvoiceDocumentLine = {
  position: number;
  kind: InvoiceLineRow["kind"];
  description: string;
  quantity: number;
  unitCents: number;
  amountCents: number;
};

export type InvoiceDocumentPayment = {
  amountCents: number;
  refundedCents: number;
  method: PaymentRow["method"];
  receivedAt: Date;
  reference: string | null;
};

export type InvoiceDocument = {
  invoiceId: number;
  number: string;
  status: InvoiceRow["status"];
  issuedOn: string;
  dueOn: string;
  /** Days from issue to due date. */
  paymentTermsDays: number;
  currency: string;
  subtotalCents: number;
  taxCents: number;
  totalCents: number;
  /** Payments received less their refunds. */
  paidCents: number;
  /** What is still owed: total less net payments, never below 0 (0 for a void invoice). */
  balanceCents: number;
  sentAt: Date | null;
  /** The business as in settings; without a name there, the display name of MAIL_FROM ("Varroute" if none). */
  businessName: string;
  /** The business's postal address from settings (empty when not set). */
  businessAddressLines: string[];
  customer: {
    id: number;
    name: string;
    email: string;
    /** Street, then "City, Region Postal code"; empty lines left out. */
    addressLines: string[];
    anonymised: boolean;
  };
  visit: {
    id: number;
    serviceDate: string;
    yardName: string;
    roundNumber: number;
    roundsPlanned: number;
  } | null;
  /** Colonies charged for: the quantity of the colony line (0 when there is none). */
  coloniesTreated: number;
  lines: InvoiceDocumentLine[];
  payments: InvoiceDocumentPayment[];
};

/** The display name of a From header such as `Varroute <bookings@varroute.test>`. */
export function senderName(from: string): string {
  const match = /^\s*"?([^"<]*?)"?\s*</.exec(from);
  return match?.[1]?.trim() || "Varroute";
}

function daysBetween(from: string, to: string): number {
  return Math.round((Date.parse(`${to}T00:00:00Z`) - Date.parse(`${from}T00:00:00Z`)) / 86_400_000);
}

/** The invoice's document data, or null when there is no such invoice. */
export async function invoiceDocument(db: Knex, invoiceId: number): Promise<InvoiceDocument | null> {
  if (!Number.isSafeInteger(invoiceId) || invoiceId <= 0) return null;
  const invoice = await db("invoices").where({ id: invoiceId }).first();
  if (!invoice) return null;
  // One query after another: a transaction's connection runs one query at a time.
  const customer = await db("customers").where({ id: invoice.customer_id }).first("id", "name", "email", "address_line", "city", "region", "postal_code", "anonymised_at");
  const visit = invoice.visit_id
    ? await db("visits")
        .join("yards", "yards.id", "visits.yard_id")
        .join("courses", "courses.id", "visits.course_id")
        .where("visits.id", invoice.visit_id)
        .first("visits.id", "visits.service_date", "visits.round_number", "courses.rounds_planned", "yards.name as yard_name")
    : undefined;
  const lines = await db("invoice_lines").where({ invoice_id: invoiceId }).orderBy("position").select("*");
  const business = businessIdentity(await loadBusinessSettings(db), senderName(mailFrom()));
  const payments = await db("payments")
    .leftJoin("refunds", "refunds.payment_id", "payments.id")
    .where("payments.invoice_id", invoiceId)
    .groupBy("payments.id")
    .orderBy([{ column: "payments.received_at" }, { column: "payments.id" }])
    .select(
      "payments.amount_cents",
      "payments.method",
      "payments.received_at",
      "payments.reference",
      db.raw("coalesce(sum(refunds.amount_cents), 0)::int as refunded_cents"),
    );

  const paymentList: InvoiceDocumentPayment[] = (payments as unknown as (PaymentRow & { refunded_cents: number })[]).map((p) => ({
    amountCents: Number(p.amount_cents),
    refundedCents: Number(p.refunded_cents),
    method: p.method,
    receivedAt: p.received_at,
    reference: p.reference,
  }));
  const paidCents = paymentList.reduce((sum, p) => sum + p.amountCents - p.refundedCents, 0);
  const balanceCents = invoice.status === "void" ? 0 : Math.max(0, invoice.total_cents - paidCents);
  const cityLine = [[customer?.city, customer?.region].filter(Boolean).join(", "), customer?.postal_code].filter(Boolean).join(" ");
  const documentLines: InvoiceDocumentLine[] = lines.map((line) => ({
    position: line.position,
    kind: line.kind,
    description: line.description,
    quantity: Number(line.quantity),
    unitCents: Number(line.unit_cents),
    amountCents: Number(line.amount_cents),
  }));

  return {
    invoiceId: Number(invoice.id),
    number: invoice.number,
    status: invoice.status,
    issuedOn: invoice.issued_on,
    dueOn: invoice.due_on,
    paymentTermsDays: daysBetween(invoice.issued_on, invoice.due_on),
    currency: invoice.currency,
    subtotalCents: invoice.subtotal_cents,
    taxCents: invoice.tax_cents,
    totalCents: invoice.total_cents,
    paidCents,
    balanceCents,
    sentAt: invoice.sent_at,
    businessName: business.name,
    businessAddressLines: business.addressLines,
    customer: {
      id: Number(customer?.id ?? invoice.customer_id),
      name: customer?.name ?? "",
      email: customer?.email ?? "",
      addressLines: [customer?.address_line?.trim() ?? "", cityLine.trim()].filter(Boolean),
      anonymised: Boolean(customer?.anonymised_at),
    },
    visit: visit
      ? {
          id: Number(visit.id),
          serviceDate: visit.service_date,
          yardName: (visit as unknown as { yard_name: string }).yard_name,
          roundNumber: visit.round_number,
          roundsPlanned: visit.rounds_planned,
        }
      : null,
    coloniesTreated: documentLines.filter((l) => l.kind === "colony").reduce((sum, l) => sum + l.quantity, 0),
    lines: documentLines,
    payments: paymentList,
  };
}
