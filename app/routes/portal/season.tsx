import { data, Form } from "react-router";
import { formatServiceDate } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { Button, buttonClass } from "~/components/ui/button";
import { Card, PageHeader, Stat } from "~/components/ui/card";
import { Table, Td, Th } from "~/components/ui/table";
import { seasonReportForCustomer, seasonYearFromUrl } from "~/models/season-report.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import type { Route } from "./+types/season";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Season report ${data?.report.year ?? ""} · Varroute` }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const settings = await loadBusinessSettings(db);
  const today = dateInZone(new Date(), settings.timeZone);
  const year = seasonYearFromUrl(new URL(request.url), Number(today.slice(0, 4)));
  if (year === null) throw data("Choose a year between 2000 and 2100, for example 2026.", { status: 400 });
  const report = await seasonReportForCustomer(db, { customerId: user.customerId, year, today, settings });
  return { report };
}

const LEVEL_STYLE: Record<string, string> = { below: "text-pine-800", at: "text-ochre-700 font-semibold", above: "text-alarm-700 font-semibold" };

export default function SeasonReportPage({ loaderData }: Route.ComponentProps) {
  const { report } = loaderData;
  return (
    <>
      <PageHeader
        title={`Season report ${report.year}`}
        subtitle="What the crew did at each of your yards this season, and what your mite counts say."
        actions={
          <a href={`/portal/season/pdf?year=${report.year}`} className={buttonClass("secondary")} download>
            Download PDF
          </a>
        }
      />
      <Form method="get" className="mb-6 flex flex-wrap items-end gap-3">
        <div className="flex flex-col gap-1">
          <label htmlFor="season-year" className="font-semibold">
            Season
          </label>
          <select id="season-year" name="year" defaultValue={String(report.year)} className="min-h-11 rounded-lg border-2 border-line bg-card px-3 text-base focus:border-pine-600">
            {report.years.map((y) => (
              <option key={y} value={y}>
                {y}
              </option>
            ))}
          </select>
        </div>
        <Button type="submit" variant="secondary">
          Show
        </Button>
      </Form>

      <div className="mb-6 grid grid-cols-2 gap-3 lg:grid-cols-3">
        <Stat label="Yards" value={report.totals.yards} />
        <Stat label="Treatment rounds done" value={report.totals.roundsDone} />
        <Stat label="Colony treatments given" value={report.totals.treatmentsGiven} />
      </div>

      <div className="grid gap-6 lg:grid-cols-3">
        <div className="flex min-w-0 flex-col gap-6 lg:col-span-2">
          <Card title="What the numbers mean">
            <div className="flex flex-col gap-2">
              {report.explanation.map((p) => (
                <p key={p}>{p}</p>
              ))}
            </div>
            <h3 className="mt-4 font-bold">Action thresholds your contractor uses</h3>
            <ul className="mt-1 list-disc pl-6">
              {report.thresholdLines.map((line) => (
                <li key={line}>{line}</li>
              ))}
            </ul>
          </Card>

          {report.yards.length === 0 ? <Card title="Your yards">You have no yards in Varroute yet.</Card> : null}

          {report.yards.map((yard) => (
            <Card key={yard.yardId} title={yard.archived ? `${yard.name} (no longer in use)` : yard.name}>
              <p className="mb-3 text-ink-soft">
                {yard.colonies} {yard.colonies === 1 ? "colony" : "colonies"} · {yard.roundsDone} {yard.roundsDone === 1 ? "round" : "rounds"} done in {report.year} ·{" "}
                {yard.treatmentsGiven} colony {yard.treatmentsGiven === 1 ? "treatment" : "treatments"}
              </p>
              {yard.rounds.length === 0 ? (
                <p>No treatment rounds were done at this yard in {report.year}.</p>
              ) : (
                <Table
                  caption={`Treatment rounds at ${yard.name} in ${report.year}`}
                  head={
                    <>
                      <Th>Round</Th>
                      <Th className="whitespace-normal">Colonies</Th>
                      <Th className="whitespace-normal">Mites per 100 bees</Th>
                    </>
                  }
                >
                  {yard.rounds.map((round) => (
                    <tr key={round.visitId}>
                      {/* Three columns, so a phone shows the mite counts without scrolling sideways. */}
                      <Td>
                        <span className="block font-semibold">{formatServiceDate(round.serviceDate, false)}</span>
                        <span className="block text-sm">
                          round {round.roundNumber} of {round.roundsPlanned}
                        </span>
                      </Td>
                      <Td>
                        <span className="block">{round.coloniesTreated} treated</span>
                        {round.coloniesSkipped > 0 ? <span className="block text-sm">{round.coloniesSkipped} skipped</span> : null}
                      </Td>
                      <Td>
                        {round.text.mites}
                        {round.text.verdict ? <span className={`block text-sm ${LEVEL_STYLE[round.level ?? "below"]}`}>{round.text.verdict}</span> : null}
                        {round.text.change ? <span className="mt-1 block text-sm">{round.text.change}</span> : null}
                      </Td>
                    </tr>
                  ))}
                </Table>
              )}
              <p className="mt-3">{yard.text.summary}</p>
              <p className="mt-1 font-semibold">{yard.text.next}</p>
            </Card>
          ))}
        </div>
        <SafetyCautions audience="customer" />
      </div>
    </>
  );
}
