import type { Knex } from "knex";
import { INVOICE_SORTS, type InvoiceSort, type InvoiceStatusFilter } from "~/forms/office-invoice";
export { INVOICE_SORTS, INVOICE_STATUS_FILTERS, type InvoiceSort, type InvoiceStatusFilter } from "~/forms/office-invoice";
import type { TablePage } from "~/components/data-table/query";
import type { InvoiceRow } from "./tables";
import type { Stripe } from "~/services/stripe.server";
import { expireCheckoutSessions } from "./payments.server";

// The office's invoices table and voiding. One query reads the page of rows, one the count
// and the totals of everything the filters found. Money in integer cents.
//
// "paid" on a row is net of refunds: payments less their refunds. The balance is what is
// still owed (total − net paid, never below 0; 0 for a void invoice). An invoice is overdue
// when it is open and its due date is before the business's today. The totals' cents are
// invoice totals (as on "Money at a glance"); open and overdue also carry their balances.


export type InvoiceFilters = {
  search: string;
  status: InvoiceStatusFilter;
  /** Issued on or after (ISO date), or null. */
  from: string | null;
  /** Issued on or before (ISO date), or null. */
  to: string | null;
};

export type InvoiceTableRow = {
  id: number;
  number: string;
  customerId: number;
  customerName: string;
  issuedOn: string;
  dueOn: string;
  status: InvoiceRow["status"];
  overdue: boolean;
  totalCents: number;
  paidCents: number;
  balanceCents: number;
};

export type InvoiceTableTotals = {
  open: { count: number; cents: number; balanceCents: number };
  overdue: { count: number; cents: number; balanceCents: number };
  paid: { count: number; cents: number };
};

export type InvoicePage = TablePage<
  InvoiceTableRow,
  InvoiceTableTotals,
  InvoiceSort
> &
  InvoiceFilters;

// Whitelisted sort expressions on the derived table "x"; the id breaks ties.
const SORT_SQL: Record<InvoiceSort, string> = {
  number: "x.year %DIR%, x.sequence %DIR%",
  customer: "lower(x.customer_name) %DIR%",
  issued: "x.issued_on %DIR%",
  due: "x.due_on %DIR%",
  status: "x.status %DIR%",
  total: "x.total_cents %DIR%",
  paid: "x.paid_cents %DIR%",
  balance: "x.balance_cents %DIR%",
};

function escapeLike(text: string) {
  return text.replace(/[\\%_]/g, (c) => `\\${c}`);
}

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;

/** Invoices with customer, net paid, balance and overdue flag, filtered (no paging). */
function filtered(db: Knex, filters: InvoiceFilters, today: string) {
  const q = db("invoices as i")
    .join("customers as c", "c.id", "i.customer_id")
    .select(
      "i.id",
      "i.number",
      "i.year",
      "i.sequence",
      "i.customer_id",
      "c.name as customer_name",
      "i.issued_on",
      "i.due_on",
      "i.status",
      "i.total_cents",
      db.raw(
        `((select coalesce(sum(p.amount_cents), 0) from payments p where p.invoice_id = i.id)
          - (select coalesce(sum(r.amount_cents), 0) from refunds r join payments p on p.id = r.payment_id where p.invoice_id = i.id))::bigint as paid_cents`,
      ),
      db.raw("(i.status = 'open' and i.due_on < ?) as overdue", [today]),
    );
  const search = filters.search.trim();
  if (search) {
    const like = `%${escapeLike(search)}%`;
    q.where((w) =>
      w
        .whereRaw("c.name ilike ?", [like])
        .orWhereRaw("i.number ilike ?", [like])
        .orWhereRaw("c.email ilike ?", [like]),
    );
  }
  if (filters.status === "overdue")
    q.where("i.status", "open").where("i.due_on", "<", today);
  else if (filters.status !== "all") q.where("i.status", filters.status);
  if (filters.from && ISO_DATE.test(filters.from))
    q.where("i.issued_on", ">=", filters.from);
  if (filters.to && ISO_DATE.test(filters.to))
    q.where("i.issued_on", "<=", filters.to);
  return db
    .from(q.as("y"))
    .select(
      "y.*",
      db.raw(
        "case when y.status = 'void' then 0 else greatest(0, y.total_cents - y.paid_cents) end::bigint as balance_cents",
      ),
    );
}

export async function listInvoices(
  db: Knex,
  query: InvoiceFilters & {
    sort: InvoiceSort;
    dir: "asc" | "desc";
    page: number;
    pageSize: number;
  },
  today: string,
): Promise<InvoicePage> {
  const sort: InvoiceSort = (INVOICE_SORTS as readonly string[]).includes(
    query.sort,
  )
    ? query.sort
    : "number";
  const dir = query.dir === "desc" ? "desc" : "asc";
  const filters: InvoiceFilters = {
    search: query.search,
    status: query.status,
    from: query.from,
    to: query.to,
  };

  const sums = (await db
    .from(filtered(db, filters, today).as("x"))
    .first(
      db.raw("count(*)::int as total"),
      db.raw("count(*) filter (where x.status = 'open')::int as open_count"),
      db.raw(
        "coalesce(sum(x.total_cents) filter (where x.status = 'open'), 0)::bigint as open_cents",
      ),
      db.raw(
        "coalesce(sum(x.balance_cents) filter (where x.status = 'open'), 0)::bigint as open_balance",
      ),
      db.raw("count(*) filter (where x.overdue)::int as overdue_count"),
      db.raw(
        "coalesce(sum(x.total_cents) filter (where x.overdue), 0)::bigint as overdue_cents",
      ),
      db.raw(
        "coalesce(sum(x.balance_cents) filter (where x.overdue), 0)::bigint as overdue_balance",
      ),
      db.raw("count(*) filter (where x.status = 'paid')::int as paid_count"),
      db.raw(
        "coalesce(sum(x.total_cents) filter (where x.status = 'paid'), 0)::bigint as paid_cents",
      ),
    )) as Record<string, string | number>;
  const total = Number(sums.total);
  const lastPage = Math.max(1, Math.ceil(total / query.pageSize));
  const page = Math.min(Math.max(1, query.page), lastPage);

  const rows = (await db
    .from(filtered(db, filters, today).as("x"))
    .select("x.*")
    .orderByRaw(`${SORT_SQL[sort].replaceAll("%DIR%", dir)}, x.id ${dir}`)
    .limit(query.pageSize)
    .offset((page - 1) * query.pageSize)) as Record<string, unknown>[];

  return {
    ...filters,
    sort,
    dir,
    page,
    pageSize: query.pageSize,
    total,
    rows: rows.map((r) => ({
      id: Number(r.id),
      number: String(r.number),
      customerId: Number(r.customer_id),
      customerName: String(r.customer_name),
      issuedOn: String(r.issued_on),
      dueOn: String(r.due_on),
      status: r.status as InvoiceRow["status"],
      overdue: Boolean(r.overdue),
      totalCents: Number(r.total_cents),
      paidCents: Number(r.paid_cents),
      balanceCents: Number(r.balance_cents),
    })),
    totals: {
      open: {
        count: Number(sums.open_count),
        cents: Number(sums.open_cents),
        balanceCents: Number(sums.open_balance),
      },
      overdue: {
        count: Number(sums.overdue_count),
        cents: Number(sums.overdue_cents),
        balanceCents: Number(sums.overdue_balance),
      },
      paid: { count: Number(sums.paid_count), cents: Number(sums.paid_cents) },
    },
  };
}

/** A void the office may not make as asked; the message is for the person. */
export class VoidRefused extends Error {
  constructor(message: string) {
    super(message);
    this.name = "VoidRefused";
  }
}

/**
 * Voids an open invoice that has no payments, with a reason (kept on the invoice and in the
 * audit log). A paid, partly paid, refunded or already void invoice is refused. After the
 * void is committed, the invoice's open Checkout Session is expired; Stripe being unreachable
 * does not undo the void (the webhook refunds any card payment on a void invoice).
 */
export async function voidInvoice(
  db: Knex,
  input: { invoiceId: number; reason: string; actorUserId: number },
  deps: { stripe?: Stripe } = {},
): Promise<void> {
  const reason = input.reason.trim();
  if (!reason) throw new VoidRefused("Give a reason for voiding the invoice.");
  await db.transaction(async (trx) => {
    const invoice = await trx("invoices")
      .where({ id: input.invoiceId })
      .forUpdate()
      .first();
    if (!invoice)
      throw new VoidRefused(`There is no invoice ${input.invoiceId}.`);
    if (invoice.status !== "open")
      throw new VoidRefused(
        `Invoice ${invoice.number} is ${invoice.status}; only an open invoice can be voided.`,
      );
    const payments = (await trx("payments")
      .where({ invoice_id: invoice.id })
      .first(trx.raw("count(*)::int as n"))) as unknown as { n: number };
    if (Number(payments.n) > 0)
      throw new VoidRefused(
        `Invoice ${invoice.number} has payments; refund them instead of voiding it.`,
      );
    await trx("invoices")
      .where({ id: invoice.id })
      .update({
        status: "void",
        void_reason: reason,
        updated_at: trx.fn.now() as unknown as Date,
      });
    await trx("audit_log").insert({
      actor_user_id: input.actorUserId,
      action: "invoice.void",
      entity_type: "invoice",
      entity_id: String(invoice.id),
      before: JSON.stringify({ status: invoice.status }),
      after: JSON.stringify({ status: "void", reason }),
    });
  });
  await expireCheckoutSessions(db, { invoiceId: input.invoiceId, why: "void", actorUserId: input.actorUserId }, deps);
}
