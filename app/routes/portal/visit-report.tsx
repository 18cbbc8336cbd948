import { data, Link } from "react-router";
import { formatServiceDate } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { Card, PageHeader, Stat } from "~/components/ui/card";
import { Table, Td, Th } from "~/components/ui/table";
import { formatMitesPer100 } from "~/domain/mites";
import { formatDose } from "~/domain/units";
import { SKIP_REASON_NAMES } from "~/components/crew/field-types";
import { loadBusinessSettings } from "~/models/settings.server";
import { visitReportForCustomer } from "~/models/tallies.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import type { Route } from "./+types/visit-report";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Visit report: ${data?.report.yardName ?? ""} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const report = await visitReportForCustomer(db, { visitId: idParam(params.visitId, "visit"), customerId: user.customerId });
  if (!report) throw data("There is no finished visit with that number in your account.", { status: 404 });
  const settings = await loadBusinessSettings(db);
  return { report, unitSystem: settings.unitSystem };
}

const LEVEL: Record<string, string> = { below: "below the threshold", at: "at the threshold", above: "above the threshold" };

export default function VisitReportPage({ loaderData }: Route.ComponentProps) {
  const { report, unitSystem } = loaderData;
  return (
    <>
      <Link to={`/portal/yards/${report.yardId}`} className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← {report.yardName}
      </Link>
      <PageHeader title={`Visit report: ${report.yardName}`} subtitle={`${formatServiceDate(report.serviceDate)} · round ${report.roundNumber} of ${report.roundsPlanned}`} />
      <div className="mb-6 grid grid-cols-2 gap-3 lg:grid-cols-4">
        <Stat label="Colonies treated" value={report.treated} />
        <Stat label="Skipped" value={report.skipped} tone={report.skipped ? "attention" : "plain"} />
        <Stat label="Oxalic acid dihydrate applied" value={formatDose(report.grams, unitSystem)} />
        <Stat label="Next round" value={report.courseComplete ? "Course complete" : report.nextRound ? formatServiceDate(report.nextRound.date, false) : "—"} />
      </div>
      <div className="grid gap-6 lg:grid-cols-3">
        <Card title="Colony by colony" className="min-w-0 lg:col-span-2">
          <Table
            caption="Colony by colony"
            head={
              <>
                <Th>Colony</Th>
                <Th>Result</Th>
                <Th align="right">Dose</Th>
                <Th>Mite count</Th>
              </>
            }
          >
            {report.colonies.map((c) => (
              <tr key={c.label}>
                <Td>{c.label}</Td>
                <Td>
                  {c.outcome === "treated" ? "Treated" : `Skipped: ${c.skipReason ? SKIP_REASON_NAMES[c.skipReason] : ""}`}
                  {c.skipNote ? <span className="block text-sm text-ink-soft">{c.skipNote}</span> : null}
                </Td>
                <Td align="right">{c.outcome === "treated" ? formatDose(c.doseGrams, unitSystem) : "—"}</Td>
                <Td>
                  {c.mites != null && c.beesSampled != null && c.mitesPer100 != null ? (
                    <>
                      {c.mites} mites in {c.beesEstimated ? `about ${c.beesSampled} bees (estimated from a ${c.sampleMl} mL sample)` : `${c.beesSampled} bees`} = {formatMitesPer100(c.mitesPer100)} per 100
                      {c.level ? <span className="block text-sm">{LEVEL[c.level]} of {c.threshold}</span> : null}
                    </>
                  ) : (
                    "Not washed"
                  )}
                </Td>
              </tr>
            ))}
          </Table>
          <p className="mt-3 text-sm text-ink-soft">
            Product: {report.productName} ({report.productRegistrationNumber}).{report.weatherNote ? ` Weather: ${report.weatherNote}.` : ""}
            {report.nextRound?.deferred ? " The next round's day was full; the office will confirm a new day." : ""}
          </p>
        </Card>
        <SafetyCautions audience="customer" />
      </div>
    </>
  );
}
