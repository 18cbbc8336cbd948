import { Link } from "react-router";
import { buttonClass } from "~/components/ui/button";
import { Card, PageHeader, Stat } from "~/components/ui/card";
import { Table, Td, Th } from "~/components/ui/table";
import { broodStatusName, formatCents, formatServiceDate, timePreferenceName, visitStatusName } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { invoiceTotals, invoicesForCustomer } from "~/models/invoices.server";
import { upcomingVisitsForCustomer } from "~/models/visits.server";
import { listYardsForCustomer } from "~/models/yards.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { payLinkToken } from "~/services/pay-link.server";
import { requireCustomer } from "~/services/permissions.server";
import type { Route } from "./+types/home";

export const meta: Route.MetaFunction = () => [{ title: "My yards · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const today = await businessToday(db);
  const [yards, visits, invoices, totals] = await Promise.all([
    listYardsForCustomer(db, user.customerId, today),
    upcomingVisitsForCustomer(db, user.customerId, today),
    invoicesForCustomer(db, user.customerId, 5),
    invoiceTotals(db, today, user.customerId),
  ]);
  // Open invoices get a pay link (relative, so it works behind any host name).
  const withPay = invoices.map((i) => ({ ...i, payPath: i.status === "open" ? `/pay/${payLinkToken(i.id)}` : null }));
  return { name: user.name, yards, visits, invoices: withPay, totals };
}

export default function PortalHome({ loaderData }: Route.ComponentProps) {
  const { yards, visits, invoices, totals } = loaderData;
  const colonies = yards.reduce((sum, y) => sum + y.colonyCount, 0);
  return (
    <>
      <PageHeader
        title={`Hello, ${loaderData.name.split(" ")[0]}`}
        subtitle="Your yards, your coming treatment visits and your invoices."
        actions={
          <>
            <Link to="/portal/yards/new" className={buttonClass("secondary")}>
              Add a yard
            </Link>
            {yards.length ? (
              <Link to="/portal/book" className={buttonClass("primary")}>
                Book a treatment
              </Link>
            ) : null}
          </>
        }
      />
      <div className="mb-6 grid grid-cols-2 gap-3 lg:grid-cols-4">
        <Stat label="Yards" value={yards.length} />
        <Stat label="Colonies" value={colonies} />
        <Stat label="Visits booked" value={visits.length} />
        <Stat label="To pay" value={formatCents(totals.open.cents)} tone={totals.overdue.count > 0 ? "attention" : "plain"} />
      </div>
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="flex min-w-0 flex-col gap-6 lg:col-span-2">
          <Card title="Your yards">
            <Table
              caption="Your yards"
              empty="You have no yards yet."
              head={
                <>
                  <Th>Yard</Th>
                  <Th align="right">Colonies</Th>
                  <Th>Brood</Th>
                  <Th>Next visit</Th>
                </>
              }
            >
              {yards.map((yard) => (
                <tr key={yard.id}>
                  <Td>
                    <Link to={`/portal/yards/${yard.id}`} className="font-semibold text-pine-800 underline">
                      {yard.name}
                    </Link>
                  </Td>
                  <Td align="right">{yard.colonyCount}</Td>
                  <Td>{broodStatusName(yard.broodStatus)}</Td>
                  <Td>{yard.nextVisitDate ? formatServiceDate(yard.nextVisitDate) : "None booked"}</Td>
                </tr>
              ))}
            </Table>
          </Card>
          <Card title="Coming visits">
            <Table
              caption="Coming treatment visits"
              empty="No visits are booked."
              head={
                <>
                  <Th>Day</Th>
                  <Th>Yard</Th>
                  <Th>Round</Th>
                  <Th align="right">Colonies</Th>
                  <Th>Time</Th>
                  <Th>Status</Th>
                </>
              }
            >
              {visits.map((visit) => (
                <tr key={visit.id}>
                  <Td>{formatServiceDate(visit.serviceDate)}</Td>
                  <Td>{visit.yardName}</Td>
                  <Td>
                    {visit.roundNumber} of {visit.roundsPlanned}
                  </Td>
                  <Td align="right">{visit.colonies}</Td>
                  <Td>{timePreferenceName(visit.timePreference)}</Td>
                  <Td>{visitStatusName(visit.status)}</Td>
                </tr>
              ))}
            </Table>
          </Card>
          <Card title="Recent invoices">
            <Table
              caption="Recent invoices"
              empty="No invoices yet."
              head={
                <>
                  <Th>Number</Th>
                  <Th>Issued</Th>
                  <Th>Due</Th>
                  <Th align="right">Total</Th>
                  <Th>Status</Th>
                </>
              }
            >
              {invoices.map((invoice) => (
                <tr key={invoice.id}>
                  <Td>{invoice.number}</Td>
                  <Td>{formatServiceDate(invoice.issuedOn)}</Td>
                  <Td>{formatServiceDate(invoice.dueOn)}</Td>
                  <Td align="right">{formatCents(invoice.totalCents)}</Td>
                  <Td className="capitalize">
                    {invoice.payPath ? (
                      <Link to={invoice.payPath} className="font-semibold text-pine-800 underline">
                        {invoice.status}: pay <span className="sr-only">invoice {invoice.number}</span>
                      </Link>
                    ) : (
                      invoice.status
                    )}
                  </Td>
                </tr>
              ))}
            </Table>
          </Card>
        </div>
        <SafetyCautions audience="customer" />
      </div>
    </>
  );
}
