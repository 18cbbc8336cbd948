import { Link } from "react-router";
import { buttonClass } from "~/components/ui/button";
import { Card, PageHeader, Stat } from "~/components/ui/card";
import { Table, Td, Th } from "~/components/ui/table";
import { broodStatusName, formatCents, formatServiceDate, timePreferenceName, visitStatusName } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { listCustomerInvoices, owedSummary } from "~/models/portal-invoices.server";
import { upcomingVisitsForCustomer } from "~/models/visits.server";
import { listYardsForCustomer } from "~/models/yards.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import type { Route } from "./+types/home";

export const meta: Route.MetaFunction = () => [{ title: "My yards · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const today = await businessToday(db);
  const [yards, visits, invoices] = await Promise.all([
    listYardsForCustomer(db, user.customerId, today),
    upcomingVisitsForCustomer(db, user.customerId, today),
    listCustomerInvoices(db, user.customerId),
  ]);
  return { name: user.name, yards, visits, invoiceCount: invoices.length, owed: owedSummary(invoices) };
}

export default function PortalHome({ loaderData }: Route.ComponentProps) {
  const { yards, visits, invoiceCount, owed } = loaderData;
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
        <Stat label="To pay" value={formatCents(owed.owedCents)} tone={owed.overdueCount > 0 ? "attention" : "plain"} />
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
          <Card title="Invoices">
            <p className="text-lg">
              {owed.openCount === 0
                ? invoiceCount === 0
                  ? "You have no invoices yet."
                  : "Nothing to pay at the moment."
                : `${formatCents(owed.owedCents)} to pay on ${owed.openCount === 1 ? "1 invoice" : `${owed.openCount} invoices`}${owed.overdueCount > 0 ? `, ${owed.overdueCount} of them overdue` : ""}.`}
            </p>
            <Link to="/portal/invoices" className={buttonClass(owed.openCount > 0 ? "primary" : "secondary", "mt-3")}>
              {owed.openCount > 0 ? "See and pay your invoices" : "See your invoices"}
            </Link>
          </Card>
        </div>
        <SafetyCautions audience="customer" />
      </div>
    </>
  );
}
