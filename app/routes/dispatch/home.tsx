import { Link } from "react-router";
import { Card, PageHeader, Stat } from "~/components/ui/card";
import { Table, Td, Th } from "~/components/ui/table";
import { formatServiceDate } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { runsBetween } from "~/models/runs.server";
import { serviceDaysAhead } from "~/models/visits.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/home";

export const meta: Route.MetaFunction = () => [{ title: "Days ahead · Varroute" }];

const DAYS_AHEAD = 21;

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const today = await businessToday(db);
  const days = await serviceDaysAhead(db, today, DAYS_AHEAD);
  const lastDay = days.at(-1)?.serviceDate ?? today;
  const runs = await runsBetween(db, today, lastDay);
  return { today, days, runs, welcome: new URL(request.url).searchParams.has("welcome") };
}

const RUN_STATUS: Record<string, string> = { draft: "Draft", published: "Published", in_progress: "Under way", done: "Done" };

export default function DispatchHome({ loaderData }: Route.ComponentProps) {
  const { days, runs, today } = loaderData;
  const unrouted = days.reduce((sum, d) => sum + (d.visits - d.routed), 0);
  const colonies = days.reduce((sum, d) => sum + d.colonies, 0);
  return (
    <>
      <PageHeader title="Days ahead" subtitle={`Bookings for the next ${DAYS_AHEAD} days, from ${formatServiceDate(today)}. Open a day to plan its runs.`} />
      {loaderData.welcome ? (
        <div role="status" className="mb-6 rounded-lg border-2 border-pine-600 bg-pine-50 px-4 py-3 text-ink">
          <p className="font-semibold">Your business is set up, and you are signed in as its owner.</p>
          <p className="mt-1">
            Next: invite your team from{" "}
            <Link to="/office/staff" className="font-semibold underline">
              Staff
            </Link>
            , and give Crew 1 its members or add crews under{" "}
            <Link to="/dispatch/crews" className="font-semibold underline">
              Crews
            </Link>
            .
          </p>
        </div>
      ) : null}
      <div className="mb-6 grid grid-cols-2 gap-3 lg:grid-cols-4">
        <Stat label="Visits booked" value={days.reduce((s, d) => s + d.visits, 0)} />
        <Stat label="Colonies to treat" value={colonies} />
        <Stat label="Visits not on a run" value={unrouted} tone={unrouted > 0 ? "attention" : "plain"} />
        <Stat label="Runs planned" value={runs.length} />
      </div>
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="flex min-w-0 flex-col gap-6 lg:col-span-2">
          <Card title="Service days">
            <Table
              caption="Service days ahead"
              empty="No visits are booked in this period."
              head={
                <>
                  <Th>Day</Th>
                  <Th align="right">Visits</Th>
                  <Th align="right">Colonies</Th>
                  <Th align="right">On a run</Th>
                  <Th align="right">Deferred</Th>
                </>
              }
            >
              {days.map((day) => (
                <tr key={day.serviceDate}>
                  <Td>
                    <Link to={`/dispatch/days/${day.serviceDate}`} className="font-semibold text-pine-800 underline">
                      {formatServiceDate(day.serviceDate)}
                    </Link>
                  </Td>
                  <Td align="right">{day.visits}</Td>
                  <Td align="right">{day.colonies}</Td>
                  <Td align="right">{day.routed}</Td>
                  <Td align="right">{day.deferred}</Td>
                </tr>
              ))}
            </Table>
          </Card>
          <Card title="Runs">
            <Table
              caption="Crew runs ahead"
              empty="No runs are planned yet."
              head={
                <>
                  <Th>Day</Th>
                  <Th>Crew</Th>
                  <Th>Status</Th>
                  <Th align="right">Stops</Th>
                  <Th align="right">Colonies</Th>
                </>
              }
            >
              {runs.map((run) => (
                <tr key={`${run.crewId}-${run.serviceDate}`}>
                  <Td>
                    <Link to={`/dispatch/days/${run.serviceDate}`} className="font-semibold text-pine-800 underline">
                      {formatServiceDate(run.serviceDate)}
                    </Link>
                  </Td>
                  <Td>{run.crewName}</Td>
                  <Td>{RUN_STATUS[run.status] ?? run.status}</Td>
                  <Td align="right">{run.stops}</Td>
                  <Td align="right">{run.colonies}</Td>
                </tr>
              ))}
            </Table>
          </Card>
        </div>
        <SafetyCautions audience="staff" />
      </div>
    </>
  );
}
