import { Link } from "react-router";
import { Pager } from "~/components/data-table/pager";
import { readTableQuery } from "~/components/data-table/query";
import { SearchForm } from "~/components/data-table/search-form";
import { SortableHeader } from "~/components/data-table/sortable-header";
import { formatCents, formatServiceDate } from "~/components/format";
import { PageHeader, Stat } from "~/components/ui/card";
import { Table, Td } from "~/components/ui/table";
import { INVOICE_SORTS, INVOICE_STATUS_FILTERS, type InvoiceStatusFilter } from "~/forms/office-invoice";
import { listInvoices } from "~/models/office-invoices.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { isCalendarDate } from "~/services/request.server";
import type { Route } from "./+types/invoices";

export const meta: Route.MetaFunction = () => [
  { title: "Invoices · Varroute" },
];

const STATUS_LABELS: Record<InvoiceStatusFilter, string> = {
  all: "All",
  open: "Open",
  overdue: "Overdue",
  paid: "Paid",
  void: "Void",
  refunded: "Refunded",
};

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.office);
  const url = new URL(request.url);
  const query = readTableQuery(url, INVOICE_SORTS, {
    sort: "number",
    dir: "desc",
  });
  const statusParam = url.searchParams.get("status") ?? "all";
  const status = (INVOICE_STATUS_FILTERS as readonly string[]).includes(
    statusParam,
  )
    ? (statusParam as InvoiceStatusFilter)
    : "all";
  // Like any malformed filter, a date not on the calendar (2027-02-30) is left out.
  const dateFilter = (name: string) => {
    const v = url.searchParams.get(name) ?? "";
    return isCalendarDate(v) ? v : null;
  };
  const today = await businessToday(db);
  const page = await listInvoices(
    db,
    { ...query, status, from: dateFilter("from"), to: dateFilter("to") },
    today,
  );
  return { page, today };
}

const linkStyle =
  "inline-flex min-h-11 items-center font-semibold text-pine-800 underline underline-offset-4";
const selectStyle =
  "min-h-11 rounded-lg border-2 border-line bg-card px-2 text-base focus:border-pine-600";

function StatusBadge({
  status,
  overdue,
}: {
  status: string;
  overdue: boolean;
}) {
  const label = overdue
    ? "Overdue"
    : status.charAt(0).toUpperCase() + status.slice(1);
  const tone = overdue
    ? "bg-alarm-100 text-alarm-700"
    : status === "paid"
      ? "bg-pine-50 text-pine-900"
      : "bg-card text-ink-soft border border-line";
  return (
    <span
      className={`inline-block rounded-full px-2 py-0.5 text-sm font-semibold whitespace-nowrap ${tone}`}
    >
      {label}
    </span>
  );
}

export default function OfficeInvoices({ loaderData }: Route.ComponentProps) {
  const { page } = loaderData;
  const filtered =
    page.search !== "" ||
    page.status !== "all" ||
    page.from !== null ||
    page.to !== null;
  const header = (
    column: string,
    label: string,
    align: "left" | "right" = "left",
  ) => (
    <SortableHeader
      column={column}
      label={label}
      sort={page.sort}
      dir={page.dir}
      align={align}
      firstDir={
        align === "right" || column === "number" || column === "issued"
          ? "desc"
          : "asc"
      }
    />
  );
  return (
    <>
      <PageHeader
        title="Invoices"
        subtitle="Find an invoice, chase what is overdue, record payments and refunds."
      />
      <div className="mb-6 grid grid-cols-1 gap-3 sm:grid-cols-3">
        <Stat
          label={`Open (${page.totals.open.count})`}
          value={formatCents(page.totals.open.balanceCents)}
        />
        <Stat
          label={`Overdue (${page.totals.overdue.count})`}
          value={formatCents(page.totals.overdue.balanceCents)}
          tone={page.totals.overdue.count ? "attention" : "plain"}
        />
        <Stat
          label={`Paid (${page.totals.paid.count})`}
          value={formatCents(page.totals.paid.cents)}
        />
      </div>
      <SearchForm
        label="Search invoices"
        hint="Customer name, e-mail or invoice number"
        search={page.search}
        filtered={filtered}
        filterNames={["status", "from", "to"]}
      >
        <label className="flex flex-col gap-1 font-semibold">
          Status
          <select
            name="status"
            defaultValue={page.status}
            key={page.status}
            className={selectStyle}
          >
            {INVOICE_STATUS_FILTERS.map((s) => (
              <option key={s} value={s}>
                {STATUS_LABELS[s]}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1 font-semibold">
          Issued from
          <input
            type="date"
            name="from"
            defaultValue={page.from ?? ""}
            key={`from-${page.from}`}
            className={selectStyle}
          />
        </label>
        <label className="flex flex-col gap-1 font-semibold">
          Issued to
          <input
            type="date"
            name="to"
            defaultValue={page.to ?? ""}
            key={`to-${page.to}`}
            className={selectStyle}
          />
        </label>
      </SearchForm>
      <Table
        caption="Invoices"
        empty={
          filtered
            ? "No invoice matches these filters."
            : "There are no invoices yet."
        }
        head={
          <>
            {header("number", "Number")}
            {header("customer", "Customer")}
            {header("issued", "Issued")}
            {header("due", "Due")}
            {header("status", "Status")}
            {header("total", "Total", "right")}
            {header("paid", "Paid", "right")}
            {header("balance", "Balance", "right")}
          </>
        }
        foot={
          <tr>
            <th scope="row" colSpan={5} className="px-3 py-2 text-left">
              {page.total.toLocaleString("en-US")}{" "}
              {page.total === 1 ? "invoice" : "invoices"}
              {filtered ? " found" : ""}: open{" "}
              {formatCents(page.totals.open.cents)} ({page.totals.open.count}),
              overdue {formatCents(page.totals.overdue.cents)} (
              {page.totals.overdue.count}), paid{" "}
              {formatCents(page.totals.paid.cents)} ({page.totals.paid.count})
            </th>
            <Td colSpan={3}>
              <span className="sr-only">
                Totals by status are in the row heading
              </span>
            </Td>
          </tr>
        }
      >
        {page.rows.map((invoice) => (
          <tr key={invoice.id}>
            <Td>
              <Link to={`/office/invoices/${invoice.id}`} className={linkStyle}>
                {invoice.number}
              </Link>
            </Td>
            <Td>{invoice.customerName}</Td>
            <Td className="whitespace-nowrap">
              {formatServiceDate(invoice.issuedOn)}
            </Td>
            <Td className="whitespace-nowrap">
              {formatServiceDate(invoice.dueOn)}
            </Td>
            <Td>
              <StatusBadge status={invoice.status} overdue={invoice.overdue} />
            </Td>
            <Td align="right">{formatCents(invoice.totalCents)}</Td>
            <Td align="right">{formatCents(invoice.paidCents)}</Td>
            <Td
              align="right"
              className={
                invoice.balanceCents > 0 ? "font-semibold" : "text-ink-soft"
              }
            >
              {formatCents(invoice.balanceCents)}
            </Td>
          </tr>
        ))}
      </Table>
      <Pager
        page={page.page}
        pageSize={page.pageSize}
        total={page.total}
        noun="invoices"
      />
    </>
  );
}
