import type { Knex } from "knex";
import { z } from "zod";
import { dateInZone } from "~/services/clock.server";
import { invoiceDocument, type InvoiceDocument } from "./invoice-documents.server";
import { loadBusinessSettings } from "./settings.server";
import type { InvoiceRow, PaymentRow } from "./tables";

// The customer's own invoices, for the portal: the list with what was paid and what is
// still owed, and one invoice in full with its payments and their refunds. Every query is
// scoped to the customer, so another customer's invoice reads as "no such invoice".
//
// Money in integer cents. "Paid" is net of refunds (payments less their refunds). The
// balance — what the customer still has to pay — is the total less that, never below 0, on
// an open invoice, and 0 otherwise: a void invoice is not owed, and a refund on a paid
// invoice is money given back by agreement, not a debt reopened (payments.server.ts). An
// invoice is overdue when it is open, still owes money and its due date is before today in
// the business's time zone (from settings).

/** What the customer sees as the state of an invoice. */
export type PortalInvoiceStatus = "open" | "overdue" | "paid" | "void" | "refunded";

const STATUS_LABELS: Record<PortalInvoiceStatus, string> = {
  open: "To pay",
  overdue: "Overdue",
  paid: "Paid",
  void: "Cancelled",
  refunded: "Refunded",
};

const METHOD_NAMES: Record<PaymentRow["method"], string> = { card: "Card (online)", cash: "Cash", cheque: "Cheque" };

export type PortalInvoiceListItem = {
  id: number;
  number: string;
  issuedOn: string;
  dueOn: string;
  /** The treated yard and the day of the visit, when the invoice is for a visit. */
  yardName: string | null;
  serviceDate: string | null;
  totalCents: number;
  /** Payments less their refunds. */
  paidCents: number;
  balanceCents: number;
  status: PortalInvoiceStatus;
  statusLabel: string;
  /** True when the customer can pay it now (open, money still owed). */
  payable: boolean;
};

export type PortalRefund = { id: number; amountCents: number; createdAt: Date };

export type PortalPayment = {
  id: number;
  method: PaymentRow["method"];
  methodName: string;
  reference: string | null;
  receivedAt: Date;
  amountCents: number;
  refundedCents: number;
  refunds: PortalRefund[];
};

export type PortalInvoice = Omit<InvoiceDocument, "payments"> & {
  displayStatus: PortalInvoiceStatus;
  statusLabel: string;
  payable: boolean;
  /** Every payment received, oldest first. */
  receivedCents: number;
  /** Every refund given back, over all payments. */
  refundedCents: number;
  payments: PortalPayment[];
  /** Whether the invoice went out by e-mail, and when. */
  emailed: { sent: boolean; sentAt: Date | null };
  /** The business's time zone, for showing payment and refund times. */
  timeZone: string;
};

/** The invoice id in a portal URL: a positive whole number, else null (the page answers 404). */
export const portalInvoiceIdSchema = z
  .string()
  .regex(/^[1-9]\d{0,11}$/)
  .transform(Number);

export function parsePortalInvoiceId(param: string | undefined): number | null {
  const parsed = portalInvoiceIdSchema.safeParse(param);
  return parsed.success ? parsed.data : null;
}

/** What the customer still has to pay on an invoice. */
export function portalBalanceCents(status: InvoiceRow["status"], totalCents: number, paidCents: number): number {
  return status === "open" ? Math.max(0, totalCents - paidCents) : 0;
}

/** The customer's view of an invoice's state from its stored status and money. */
export function portalInvoiceStatus(status: InvoiceRow["status"], dueOn: string, balanceCents: number, today: string): PortalInvoiceStatus {
  if (status === "open" && balanceCents > 0 && dueOn < today) return "overdue";
  return status;
}

async function todayFor(db: Knex, now: Date): Promise<{ today: string; timeZone: string }> {
  const { timeZone } = await loadBusinessSettings(db);
  return { today: dateInZone(now, timeZone), timeZone };
}

type ListRow = {
  id: number;
  number: string;
  status: InvoiceRow["status"];
  issued_on: string;
  due_on: string;
  total_cents: number;
  paid_cents: number;
  yard_name: string | null;
  service_date: string | null;
};

/** The customer's invoices, newest first, with net paid, balance and status (incl. overdue). */
export async function listCustomerInvoices(db: Knex, customerId: number | string, options: { now?: Date } = {}): Promise<PortalInvoiceListItem[]> {
  const { today } = await todayFor(db, options.now ?? new Date());
  const rows = (await db("invoices as i")
    .leftJoin("visits as v", "v.id", "i.visit_id")
    .leftJoin("yards as y", "y.id", "v.yard_id")
    .where("i.customer_id", customerId)
    .orderBy([
      { column: "i.issued_on", order: "desc" },
      { column: "i.year", order: "desc" },
      { column: "i.sequence", order: "desc" },
      { column: "i.id", order: "desc" },
    ])
    .select(
      "i.id",
      "i.number",
      "i.status",
      "i.issued_on",
      "i.due_on",
      "i.total_cents",
      "y.name as yard_name",
      "v.service_date",
      db.raw(
        `((select coalesce(sum(p.amount_cents), 0) from payments p where p.invoice_id = i.id)
          - (select coalesce(sum(r.amount_cents), 0) from refunds r join payments p on p.id = r.payment_id where p.invoice_id = i.id))::bigint as paid_cents`,
      ),
    )) as unknown as ListRow[];

  return rows.map((r) => {
    const totalCents = Number(r.total_cents);
    const paidCents = Number(r.paid_cents);
    const balanceCents = portalBalanceCents(r.status, totalCents, paidCents);
    const status = portalInvoiceStatus(r.status, r.due_on, balanceCents, today);
    return {
      id: Number(r.id),
      number: r.number,
      issuedOn: r.issued_on,
      dueOn: r.due_on,
      yardName: r.yard_name ?? null,
      serviceDate: r.service_date ?? null,
      totalCents,
      paidCents,
      balanceCents,
      status,
      statusLabel: STATUS_LABELS[status],
      payable: r.status === "open" && balanceCents > 0,
    };
  });
}

/** What the customer owes over a list of their invoices. */
export function owedSummary(invoices: readonly PortalInvoiceListItem[]): { owedCents: number; openCount: number; overdueCents: number; overdueCount: number } {
  const open = invoices.filter((i) => i.payable);
  const overdue = open.filter((i) => i.status === "overdue");
  return {
    owedCents: open.reduce((sum, i) => sum + i.balanceCents, 0),
    openCount: open.length,
    overdueCents: overdue.reduce((sum, i) => sum + i.balanceCents, 0),
    overdueCount: overdue.length,
  };
}

/**
 * One of the customer's invoices in full: lines, totals, payments each with its refunds,
 * whether it was e-mailed. Null when there is no such invoice or it is another customer's.
 */
export async function customerInvoice(db: Knex, customerId: number | string, invoiceId: number, options: { now?: Date } = {}): Promise<PortalInvoice | null> {
  if (!Number.isSafeInteger(invoiceId) || invoiceId <= 0) return null;
  const own = await db("invoices").where({ id: invoiceId, customer_id: Number(customerId) }).first("id");
  if (!own) return null;
  const doc = await invoiceDocument(db, invoiceId);
  if (!doc) return null;
  const { today, timeZone } = await todayFor(db, options.now ?? new Date());

  const payments = await db("payments")
    .where({ invoice_id: invoiceId })
    .orderBy([{ column: "received_at" }, { column: "id" }])
    .select("id", "amount_cents", "method", "reference", "received_at");
  const refunds = await db("refunds")
    .join("payments", "payments.id", "refunds.payment_id")
    .where("payments.invoice_id", invoiceId)
    .orderBy([{ column: "refunds.created_at" }, { column: "refunds.id" }])
    .select("refunds.id", "refunds.payment_id", "refunds.amount_cents", "refunds.created_at");
  const sentMail = await db("email_log").where({ invoice_id: invoiceId, status: "sent" }).orderBy("sent_at", "desc").first("sent_at");

  const paymentList: PortalPayment[] = payments.map((p) => {
    const ownRefunds = refunds
      .filter((r) => Number(r.payment_id) === Number(p.id))
      .map((r) => ({ id: Number(r.id), amountCents: Number(r.amount_cents), createdAt: new Date(r.created_at) }));
    return {
      id: Number(p.id),
      method: p.method,
      methodName: METHOD_NAMES[p.method] ?? p.method,
      reference: p.reference,
      receivedAt: new Date(p.received_at),
      amountCents: Number(p.amount_cents),
      refundedCents: ownRefunds.reduce((sum, r) => sum + r.amountCents, 0),
      refunds: ownRefunds,
    };
  });
  const balanceCents = portalBalanceCents(doc.status, doc.totalCents, doc.paidCents);
  const displayStatus = portalInvoiceStatus(doc.status, doc.dueOn, balanceCents, today);
  const sentAt = doc.sentAt ?? sentMail?.sent_at ?? null;
  const { payments: _payments, ...rest } = doc;
  void _payments;
  return {
    ...rest,
    balanceCents,
    displayStatus,
    statusLabel: STATUS_LABELS[displayStatus],
    payable: doc.status === "open" && balanceCents > 0,
    receivedCents: paymentList.reduce((sum, p) => sum + p.amountCents, 0),
    refundedCents: paymentList.reduce((sum, p) => sum + p.refundedCents, 0),
    payments: paymentList,
    emailed: { sent: sentAt !== null, sentAt: sentAt ? new Date(sentAt) : null },
    timeZone,
  };
}
