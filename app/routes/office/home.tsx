import { Card, PageHeader, Stat } from "~/components/ui/card";
import { Table, Td, Th } from "~/components/ui/table";
import { formatCents, formatServiceDate } from "~/components/format";
import { invoiceTotals, overdueInvoices } from "~/models/invoices.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/home";

export const meta: Route.MetaFunction = () => [{ title: "Office · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.office);
  const today = await businessToday(db);
  const [totals, overdue] = await Promise.all([invoiceTotals(db, today), overdueInvoices(db, today, 15)]);
  return { today, totals, overdue };
}

function daysLate(dueOn: string, today: string) {
  return Math.round((Date.parse(`${today}T00:00:00Z`) - Date.parse(`${dueOn}T00:00:00Z`)) / 86_400_000);
}

export default function OfficeHome({ loaderData }: Route.ComponentProps) {
  const { totals, overdue, today } = loaderData;
  return (
    <>
      <PageHeader title="Money at a glance" subtitle={`Invoices as of ${formatServiceDate(today)}.`} />
      <div className="mb-6 grid grid-cols-1 gap-3 sm:grid-cols-3">
        <Stat label={`Open (${totals.open.count})`} value={formatCents(totals.open.cents)} />
        <Stat label={`Overdue (${totals.overdue.count})`} value={formatCents(totals.overdue.cents)} tone={totals.overdue.count ? "attention" : "plain"} />
        <Stat label={`Paid (${totals.paid.count})`} value={formatCents(totals.paid.cents)} />
      </div>
      <Card title="Overdue invoices to chase">
        <Table
          caption="Overdue invoices"
          empty="Nothing is overdue."
          head={
            <>
              <Th>Number</Th>
              <Th>Customer</Th>
              <Th>Due</Th>
              <Th align="right">Days late</Th>
              <Th align="right">Total</Th>
              <Th align="right">Paid so far</Th>
            </>
          }
        >
          {overdue.map((invoice) => (
            <tr key={invoice.id}>
              <Td>{invoice.number}</Td>
              <Td>{invoice.customerName}</Td>
              <Td>{formatServiceDate(invoice.dueOn)}</Td>
              <Td align="right">{daysLate(invoice.dueOn, today)}</Td>
              <Td align="right">{formatCents(invoice.totalCents)}</Td>
              <Td align="right">{formatCents(invoice.paidCents)}</Td>
            </tr>
          ))}
        </Table>
      </Card>
    </>
  );
}
