import { Card, PageHeader, Stat } from "~/components/ui/card";
import { formatClock, formatServiceDate } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { doseGramsForRun, doseGramsForYard } from "~/domain/dose";
import { formatDistance, formatDose, formatDuration, formatTemperature } from "~/domain/units";
import { nextPublishedRunDate, publishedRunForCrew } from "~/models/runs.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/home";

export const meta: Route.MetaFunction = () => [{ title: "Today's run · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.crew);
  const settings = await loadBusinessSettings(db);
  const today = dateInZone(new Date(), settings.timeZone);
  if (!user.crewId) return { today, crewName: null, run: null, nextRunDate: null, settings: null };
  const run = await publishedRunForCrew(db, user.crewId, today);
  const nextRunDate = run ? null : await nextPublishedRunDate(db, user.crewId, today);
  const stops = (run?.stops ?? []).map((stop) => ({
    ...stop,
    grams: doseGramsForYard({ colonies: stop.colonies, broodBoxesPerColony: stop.broodBoxesPerColony }, settings.doseGramsPerBroodBox),
  }));
  return {
    today,
    crewName: run?.crewName ?? null,
    run: run ? { ...run, stops, grams: doseGramsForRun(stops.map((s) => s.grams)) } : null,
    nextRunDate,
    settings: {
      unitSystem: settings.unitSystem,
      timeZone: settings.timeZone,
      blockMinC: settings.blockMinC,
      blockMaxC: settings.blockMaxC,
      sublimationSeconds: settings.sublimationSeconds,
      entranceClosedMinutes: settings.entranceClosedMinutes,
      doseGramsPerBroodBox: settings.doseGramsPerBroodBox,
    },
  };
}

export default function CrewHome({ loaderData }: Route.ComponentProps) {
  const { run, today, nextRunDate, settings } = loaderData;
  if (!run || !settings) {
    return (
      <>
        <PageHeader title="Today's run" subtitle={formatServiceDate(today)} />
        <Card>
          <p className="text-lg">No run is published for your crew today.</p>
          {nextRunDate ? <p className="mt-2">Your next run is on {formatServiceDate(nextRunDate)}.</p> : null}
        </Card>
      </>
    );
  }
  const colonies = run.stops.reduce((sum, s) => sum + s.colonies, 0);
  return (
    <>
      <PageHeader title="Today's run" subtitle={`${run.crewName} · ${formatServiceDate(run.serviceDate)}`} />
      <div className="mb-4 grid grid-cols-2 gap-3">
        <Stat label="Stops" value={run.stops.length} />
        <Stat label="Colonies" value={colonies} />
        <Stat label="Acid to carry" value={formatDose(run.grams, settings.unitSystem)} />
        <Stat label="Driving" value={`${formatDistance(run.driveMeters, settings.unitSystem)} · ${formatDuration(Math.round(run.driveSeconds / 60))}`} />
      </div>
      <ol className="mb-6 flex flex-col gap-3" aria-label="Stops in order">
        {run.stops.map((stop, index) => (
          <li key={stop.stopId} className="rounded-xl border-2 border-line bg-card p-4">
            <div className="flex items-start gap-3">
              <span className="flex h-11 w-11 shrink-0 items-center justify-center rounded-full bg-pine-700 text-lg font-bold text-white" aria-hidden="true">
                {index + 1}
              </span>
              <div className="min-w-0 flex-1">
                <p className="text-lg font-bold">
                  <span className="sr-only">Stop {index + 1}: </span>
                  {stop.yardName}
                </p>
                <p className="text-ink-soft">
                  {stop.customerName} · arrive {formatClock(stop.arriveAt, settings.timeZone)}
                </p>
                <p className="mt-1 font-semibold">
                  {stop.colonies} colonies · {formatDose(stop.grams, settings.unitSystem)} · round {stop.roundNumber}
                </p>
                {stop.accessNotes ? <p className="mt-1 whitespace-pre-line">{stop.accessNotes}</p> : null}
              </div>
            </div>
          </li>
        ))}
      </ol>
      <Card title="Vaporizer" className="mb-6">
        <ul className="flex flex-col gap-1 text-lg">
          <li>
            Block at <strong>{formatTemperature(settings.blockMinC, settings.unitSystem)}–{formatTemperature(settings.blockMaxC, settings.unitSystem)}</strong> before each dose
          </li>
          <li>
            <strong>{formatDose(settings.doseGramsPerBroodBox, settings.unitSystem)}</strong> per brood box; a dose takes about <strong>{settings.sublimationSeconds} s</strong>
          </li>
          <li>
            Keep the entrance closed <strong>{settings.entranceClosedMinutes} min</strong> after the dose
          </li>
        </ul>
      </Card>
      <SafetyCautions audience="crew" />
    </>
  );
}
