import { Link } from "react-router";
import { formatDistance, formatDose, formatDuration, formatTemperature } from "~/domain/units";
import type { CrewRunScreen } from "~/models/crew-run.server";
import { formatClock, formatServiceDate } from "./format";
import { SafetyCautions } from "./safety-cautions";
import { Card, PageHeader, Stat } from "./ui/card";

/** A crew's run for one day, phone first: stops in order, acid to carry, vaporizer figures. */
export function CrewRunView({ screen, title }: { screen: CrewRunScreen; title: string }) {
  const { run, settings, coming, serviceDate } = screen;
  const comingList = coming.length ? (
    <Card title="Coming runs" className="mb-6">
      <ul className="flex flex-col gap-2">
        {coming.map((c) => (
          <li key={c.id}>
            <Link to={`/crew/runs/${c.serviceDate}`} className="flex min-h-11 items-center justify-between rounded-lg border-2 border-line px-3 font-semibold text-pine-800">
              <span>{formatServiceDate(c.serviceDate)}</span>
              <span className="text-ink">
                {c.stops} stops · {c.colonies} colonies
              </span>
            </Link>
          </li>
        ))}
      </ul>
    </Card>
  ) : null;
  if (!run) {
    return (
      <>
        <PageHeader title={title} subtitle={formatServiceDate(serviceDate)} />
        <Card className="mb-6">
          <p className="text-lg">No run is published for your crew on this day.</p>
        </Card>
        {comingList}
      </>
    );
  }
  const colonies = run.stops.reduce((sum, s) => sum + s.colonies, 0);
  return (
    <>
      <PageHeader title={title} subtitle={`${run.crewName} · ${formatServiceDate(run.serviceDate)}`} />
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
      {comingList}
      <SafetyCautions audience="crew" />
    </>
  );
}
