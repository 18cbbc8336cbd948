import { data } from "react-router";
import { CrewField } from "~/components/crew/crew-field";
import { ComingRuns, CrewRunView } from "~/components/crew-run-view";
import { formatServiceDate } from "~/components/format";
import { crewFieldRun } from "~/models/crew-field.server";
import { crewRunScreen } from "~/models/crew-run.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/run";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Run ${data?.screen.serviceDate ?? ""} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.crew);
  if (!/^\d{4}-\d{2}-\d{2}$/.test(params.date)) throw data("That is not a date.", { status: 404 });
  const screen = await crewRunScreen(db, user, params.date);
  const field = user.crewId ? await crewFieldRun(db, user.crewId, params.date) : null;
  return { screen, field };
}

export default function CrewRun({ loaderData }: Route.ComponentProps) {
  const title = `Run for ${formatServiceDate(loaderData.screen.serviceDate, false)}`;
  if (loaderData.field)
    return (
      <>
        <CrewField serverRun={loaderData.field} title={title} />
        <ComingRuns coming={loaderData.screen.coming} />
      </>
    );
  return <CrewRunView screen={loaderData.screen} title={title} />;
}
