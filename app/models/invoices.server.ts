import type { Knex } from "knex";

export type InvoiceTotals = { open: { count: number; cents: number }; overdue: { count: number; cents: number }; paid: { count: number; cents: number } };

/** Counts and sums of open, overdue (open past due) and paid invoices, optionally for one customer. */
export async function invoiceTotals(db: Knex, today: string, customerId?: number | string): Promise<InvoiceTotals> {
  const q = db("invoices").select(
    db.raw("count(*) filter (where status = 'open')::int as open_count"),
    db.raw("coalesce(sum(total_cents) filter (where status = 'open'), 0)::int as open_cents"),
    db.raw("count(*) filter (where status = 'open' and due_on < ?)::int as overdue_count", [today]),
    db.raw("coalesce(sum(total_cents) filter (where status = 'open' and due_on < ?), 0)::int as overdue_cents", [today]),
    db.raw("count(*) filter (where status = 'paid')::int as paid_count"),
    db.raw("coalesce(sum(total_cents) filter (where status = 'paid'), 0)::int as paid_cents"),
  );
  if (customerId !== undefined) q.where("customer_id", customerId);
  const row = (await q.first()) as Record<string, number>;
  return {
    open: { count: row.open_count, cents: row.open_cents },
    overdue: { count: row.overdue_count, cents: row.overdue_cents },
    paid: { count: row.paid_count, cents: row.paid_cents },
  };
}

export type InvoiceListItem = {
  id: number;
  number: string;
  customerName: string;
  issuedOn: string;
  dueOn: string;
  status: string;
  totalCents: number;
  paidCents: number;
};

function invoiceList(db: Knex) {
  return db("invoices")
    .join("customers", "customers.id", "invoices.customer_id")
    .select(
      "invoices.id",
      "invoices.number",
      "customers.name as customerName",
      "invoices.issued_on as issuedOn",
      "invoices.due_on as dueOn",
      "invoices.status",
      "invoices.total_cents as totalCents",
      db("payments").sum("amount_cents").whereRaw("payments.invoice_id = invoices.id").as("paidCents"),
    );
}

function withPaidNumber(rows: (Omit<InvoiceListItem, "paidCents"> & { paidCents: number | null })[]): InvoiceListItem[] {
  return rows.map((r) => ({ ...r, paidCents: Number(r.paidCents ?? 0) }));
}

/** Open invoices past their due date, oldest due first. */
export async function overdueInvoices(db: Knex, today: string, limit = 10): Promise<InvoiceListItem[]> {
  return withPaidNumber(await invoiceList(db).where("invoices.status", "open").where("invoices.due_on", "<", today).orderBy("invoices.due_on").limit(limit));
}

export async function invoicesForCustomer(db: Knex, customerId: number | string, limit = 10): Promise<InvoiceListItem[]> {
  return withPaidNumber(await invoiceList(db).where("invoices.customer_id", customerId).orderBy("invoices.issued_on", "desc").limit(limit));
}
