import { Link } from "react-router";
import type { CrewRunScreen } from "~/models/crew-run.server";
import { formatServiceDate } from "./format";
import { Card, PageHeader } from "./ui/card";

/** The crew's published runs ahead, each a big link. */
export function ComingRuns({ coming }: { coming: CrewRunScreen["coming"] }) {
  if (!coming.length) return null;
  return (
    <Card title="Coming runs" className="mt-6">
      <ul className="flex flex-col gap-2">
        {coming.map((c) => (
          <li key={c.id}>
            <Link to={`/crew/runs/${c.serviceDate}`} className="flex min-h-12 items-center justify-between rounded-lg border-2 border-line px-3 font-semibold text-pine-800">
              <span>{formatServiceDate(c.serviceDate)}</span>
              <span className="text-ink">
                {c.stops} stops · {c.colonies} colonies
              </span>
            </Link>
          </li>
        ))}
      </ul>
    </Card>
  );
}

/** A day without a published run for the crew: say so, and list the coming runs. */
export function CrewRunView({ screen, title }: { screen: CrewRunScreen; title: string }) {
  return (
    <>
      <PageHeader title={title} subtitle={formatServiceDate(screen.serviceDate)} />
      <Card>
        <p className="text-lg">No run is published for your crew on this day.</p>
      </Card>
      <ComingRuns coming={screen.coming} />
    </>
  );
}
