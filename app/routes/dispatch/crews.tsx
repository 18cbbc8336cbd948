import { Link } from "react-router";
import { formatServiceDate } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { buttonClass } from "~/components/ui/button";
import { PageHeader } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { Table, Td, Th } from "~/components/ui/table";
import { crewEstimateBasis, listCrews, overbookedDaysAhead } from "~/models/crews.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/crews";
import { dailyLimitLines, startEndLines } from "./crew-table-text";

// The business's crews with the figures the booking calendar and the day planner use.

export const meta: Route.MetaFunction = () => [{ title: "Crews · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const url = new URL(request.url);
  const notice = url.searchParams.has("added") ? "Crew added." : url.searchParams.has("saved") ? "Crew saved." : null;
  return { crews: await listCrews(db), overbooked: await overbookedDaysAhead(db), basis: await crewEstimateBasis(db), notice };
}

const linkStyle = "inline-flex min-h-11 items-center font-semibold text-pine-800 underline underline-offset-4";

export default function DispatchCrews({ loaderData }: Route.ComponentProps) {
  const { crews, overbooked, basis, notice } = loaderData;
  return (
    <>
      <PageHeader
        title="Crews"
        subtitle="Who works when, from where, with what kit and up to which daily limits. The booking calendar and the day planner count these crews."
        actions={
          <Link to="/dispatch/crews/new" className={buttonClass("primary")}>
            Add a crew
          </Link>
        }
      />
      {notice ? (
        <div className="mb-4">
          <FormMessage tone="info" message={notice} />
        </div>
      ) : null}
      {overbooked.length > 0 ? (
        <section aria-labelledby="overbooked-heading" className="mb-4 rounded-lg border-2 border-ochre-500 bg-ochre-100 px-4 py-3">
          <h2 id="overbooked-heading" className="font-bold">
            Days ahead with more booked than the crews can take
          </h2>
          <p className="text-sm">Close or move visits from the calendar, or give the day a crew.</p>
          <ul className="mt-1">
            {overbooked.map((d) => (
              <li key={d.date}>
                <Link to={`/dispatch/calendar?date=${d.date}`} className={linkStyle}>
                  {formatServiceDate(d.date)}: {d.booked} colonies booked, room for {d.capacity}
                </Link>
              </li>
            ))}
          </ul>
        </section>
      ) : null}
      {/* Seven columns that fit the 1280 px screen's main column (max-w-7xl less its padding):
          related figures share a two-line cell, long headers wrap, text cells wrap. */}
      <Table
        caption="Crews"
        empty="No crews yet. Add one to open days for booking."
        head={
          <>
            <Th>Crew</Th>
            <Th>Members</Th>
            <Th>Start → end</Th>
            <Th>Days and hours</Th>
            <Th align="right">Vaporizers</Th>
            <Th align="right">Daily limits</Th>
            <Th align="right">
              <span className="whitespace-normal">Colonies counted a day</span>
            </Th>
          </>
        }
      >
        {crews.map((crew) => {
          const [start, end] = startEndLines(crew);
          const [colonyLimit, gramLimit] = dailyLimitLines(crew);
          return (
            <tr key={crew.id} data-crew-id={crew.id}>
              <Td>
                <Link to={`/dispatch/crews/${crew.id}`} className={linkStyle} aria-label={`Edit ${crew.name}`}>
                  {crew.name}
                </Link>
                <span
                  className={`mt-1 block w-fit rounded-full border px-2 py-0.5 text-sm font-semibold whitespace-nowrap ${crew.active ? "border-pine-600 bg-pine-50 text-pine-900" : "border-line bg-paper text-ink-soft"}`}
                >
                  {crew.active ? "Active" : "Inactive"}
                </span>
              </Td>
              <Td className="min-w-32">{crew.members.length ? crew.members.map((m) => m.name).join(", ") : <span className="text-ink-soft">No members</span>}</Td>
              <Td className="min-w-40">
                <span className="block">{start}</span>
                {end ? <span className="block">{end}</span> : null}
              </Td>
              <Td>
                <span className="block">{crew.weekdays}</span>
                <span className="block whitespace-nowrap tabular-nums">
                  {crew.workStart}–{crew.workEnd}
                </span>
              </Td>
              <Td align="right">{crew.vaporizers}</Td>
              <Td align="right" className="whitespace-nowrap">
                <span className={`block ${crew.maxColoniesPerDay == null ? "text-ink-soft" : ""}`}>{colonyLimit}</span>
                <span className={`block ${crew.maxDoseGramsPerDay == null ? "text-ink-soft" : ""}`}>{gramLimit}</span>
              </Td>
              <Td align="right">{crew.active ? crew.estimatedColoniesPerDay : <span className="text-ink-soft">—</span>}</Td>
            </tr>
          );
        })}
      </Table>
      <p className="mt-2 text-sm text-ink-soft">
        Daily limits: the most colonies, and the most grams of oxalic acid, the crew is given a day. Colonies counted a day: what the booking calendar takes for the crew on a day it works — its working hours filled with typical yards (settings), never more than its
        own limits. The day planner then routes with real drive times.
      </p>
      <p className="mt-1 text-sm text-ink-soft" data-testid="estimate-basis">
        A typical yard here: {basis.typicalColoniesPerYard} {basis.typicalColoniesPerYard === 1 ? "colony" : "colonies"}, each dosed in {basis.loadsPerTypicalColony} vaporizer{" "}
        {basis.loadsPerTypicalColony === 1 ? "load" : "loads"} (as most colonies on your books are), with {basis.averageDriveMinutesBetweenYards} min of driving to the next.
      </p>
      <SafetyCautions audience="staff" className="mt-6" />
    </>
  );
}
