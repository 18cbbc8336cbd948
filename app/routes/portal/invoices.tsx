import type { ReactNode } from "react";
import { Link } from "react-router";
import { formatCents, formatServiceDate } from "~/components/format";
import { buttonClass } from "~/components/ui/button";
import { Card, PageHeader, Stat } from "~/components/ui/card";
import { listCustomerInvoices, owedSummary, type PortalInvoiceStatus } from "~/models/portal-invoices.server";
import { db } from "~/services/db.server";
import { payLinkToken } from "~/services/pay-link.server";
import { requireCustomer } from "~/services/permissions.server";
import type { Route } from "./+types/invoices";

export const meta: Route.MetaFunction = () => [{ title: "Your invoices · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const invoices = await listCustomerInvoices(db, user.customerId);
  return {
    // Invoices that can be paid get their signed pay link (relative, so it works behind any host name).
    invoices: invoices.map((i) => ({ ...i, payPath: i.payable ? `/pay/${payLinkToken(i.id)}` : null })),
    owed: owedSummary(invoices),
  };
}

const BADGE_STYLE: Record<PortalInvoiceStatus, string> = {
  overdue: "border-alarm-700 bg-alarm-100 text-alarm-700",
  open: "border-ochre-700 bg-ochre-100 text-ink",
  paid: "border-pine-700 bg-pine-50 text-pine-900",
  void: "border-line bg-card text-ink-soft",
  refunded: "border-line bg-card text-ink-soft",
};

function StatusBadge({ status, label }: { status: PortalInvoiceStatus; label: string }) {
  return <span className={`inline-block rounded-full border px-2.5 py-0.5 text-sm font-semibold whitespace-nowrap ${BADGE_STYLE[status]}`}>{label}</span>;
}

type Row = Route.ComponentProps["loaderData"]["invoices"][number];

function ColumnHead({ children, right = false }: { children: ReactNode; right?: boolean }) {
  return (
    <th role="columnheader" scope="col" className={`px-3 py-2 font-semibold whitespace-nowrap ${right ? "text-right" : ""}`}>
      {children}
    </th>
  );
}

/** A table cell; on a phone it shows its column's name above the value (the header is there for screen readers). */
function Cell({ children, label, right = false, className = "" }: { children: ReactNode; label?: string; right?: boolean; className?: string }) {
  return (
    <td role="cell" className={`md:px-3 md:py-2 ${right ? "tabular-nums md:text-right" : ""} ${className}`}>
      {label ? (
        <span aria-hidden="true" className="block text-sm text-ink-soft md:hidden">
          {label}
        </span>
      ) : null}
      {children}
    </td>
  );
}

function PayLink({ invoice }: { invoice: Row }) {
  if (!invoice.payPath) return null;
  return (
    <a href={invoice.payPath} className={buttonClass("primary", "whitespace-nowrap max-md:w-full")}>
      Pay {formatCents(invoice.balanceCents)}
      <span className="sr-only"> for invoice {invoice.number}</span>
    </a>
  );
}

function visitText(invoice: Row): string {
  if (!invoice.yardName) return "—";
  return invoice.serviceDate ? `${invoice.yardName}, ${formatServiceDate(invoice.serviceDate)}` : invoice.yardName;
}

export default function PortalInvoices({ loaderData }: Route.ComponentProps) {
  const { invoices, owed } = loaderData;
  return (
    <>
      <PageHeader title="Your invoices" subtitle="What each treatment visit cost, what you have paid and what is still to pay." />
      <div className="mb-6 grid grid-cols-2 gap-3 lg:max-w-2xl">
        <Stat label="Still to pay" value={formatCents(owed.owedCents)} tone={owed.overdueCount > 0 ? "attention" : "plain"} />
        <Stat
          label={owed.overdueCount === 1 ? "Overdue (1 invoice)" : `Overdue (${owed.overdueCount} invoices)`}
          value={owed.overdueCount > 0 ? formatCents(owed.overdueCents) : "None"}
          tone={owed.overdueCount > 0 ? "attention" : "plain"}
        />
      </div>

      {invoices.length === 0 ? (
        <Card>
          <p className="text-lg">You have no invoices yet. An invoice is made after each treatment visit, for the colonies the crew treated.</p>
        </Card>
      ) : (
        // One table for every screen: on a phone each row stacks into a card (the column names
        // show inside it), from md up it is an ordinary table. Explicit roles keep the table's
        // meaning for screen readers when the rows are laid out as blocks.
        <div className="rounded-xl md:overflow-x-auto md:border md:border-line md:bg-card" role="region" aria-label="Your invoices" tabIndex={0}>
          <table role="table" className="w-full border-collapse text-left max-md:block">
            <caption className="sr-only">Your invoices, newest first</caption>
            <thead role="rowgroup" className="bg-pine-50 text-pine-900 max-md:sr-only">
              <tr role="row">
                <ColumnHead>Invoice</ColumnHead>
                <ColumnHead>Visit</ColumnHead>
                <ColumnHead>Issued</ColumnHead>
                <ColumnHead>Due</ColumnHead>
                <ColumnHead right>Total</ColumnHead>
                <ColumnHead right>Paid</ColumnHead>
                <ColumnHead right>Still to pay</ColumnHead>
                <ColumnHead>Status</ColumnHead>
                <ColumnHead>
                  <span className="sr-only">Pay</span>
                </ColumnHead>
              </tr>
            </thead>
            <tbody role="rowgroup" className="max-md:flex max-md:flex-col max-md:gap-3 md:divide-y md:divide-line">
              {invoices.map((invoice) => (
                <tr
                  key={invoice.id}
                  role="row"
                  className="max-md:grid max-md:grid-cols-2 max-md:gap-x-3 max-md:gap-y-2 max-md:rounded-xl max-md:border max-md:border-line max-md:bg-card max-md:p-4 max-md:shadow-sm"
                >
                  <Cell className="max-md:text-lg">
                    <Link to={`/portal/invoices/${invoice.id}`} className="inline-flex min-h-11 items-center font-semibold whitespace-nowrap text-pine-800 underline underline-offset-4">
                      <span className="md:hidden">Invoice&nbsp;</span>
                      {invoice.number}
                    </Link>
                  </Cell>
                  <Cell label="Visit" className="max-md:col-span-2">
                    {visitText(invoice)}
                  </Cell>
                  <Cell label="Issued" className="whitespace-nowrap">
                    {formatServiceDate(invoice.issuedOn)}
                  </Cell>
                  <Cell label="Due" className="whitespace-nowrap">
                    {formatServiceDate(invoice.dueOn)}
                  </Cell>
                  <Cell label="Total" right>
                    {formatCents(invoice.totalCents)}
                  </Cell>
                  <Cell label="Paid" right>
                    {formatCents(invoice.paidCents)}
                  </Cell>
                  <Cell label="Still to pay" right className={invoice.balanceCents > 0 ? "font-semibold" : "text-ink-soft"}>
                    {formatCents(invoice.balanceCents)}
                  </Cell>
                  <Cell className="max-md:col-start-2 max-md:row-start-1 max-md:text-right">
                    <StatusBadge status={invoice.status} label={invoice.statusLabel} />
                  </Cell>
                  <Cell className="max-md:col-span-2 max-md:empty:hidden">{invoice.payPath ? <PayLink invoice={invoice} /> : null}</Cell>
                </tr>
              ))}
            </tbody>
            <tfoot role="rowgroup" className="border-pine-700 bg-pine-50 font-semibold text-pine-900 max-md:mt-3 max-md:block max-md:rounded-xl md:border-t-2">
              <tr role="row" className="max-md:flex max-md:flex-wrap max-md:items-baseline max-md:gap-x-2 max-md:p-4">
                <th role="rowheader" scope="row" colSpan={6} className="px-3 py-2 text-right max-md:p-0 max-md:text-left">
                  Still to pay in all
                </th>
                <td role="cell" className="px-3 py-2 text-right tabular-nums max-md:p-0">
                  {formatCents(owed.owedCents)}
                </td>
                <td role="cell" colSpan={2} className="px-3 py-2 max-md:p-0">
                  ({owed.openCount === 1 ? "1 invoice" : `${owed.openCount} invoices`})
                </td>
              </tr>
            </tfoot>
          </table>
        </div>
      )}
    </>
  );
}
