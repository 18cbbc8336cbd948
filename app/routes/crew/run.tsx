import { CrewField } from "~/components/crew/crew-field";
import { ComingRuns, CrewRunView } from "~/components/crew-run-view";
import { formatServiceDate } from "~/components/format";
import { crewFieldRun } from "~/models/crew-field.server";
import { crewRunScreen } from "~/models/crew-run.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { dateParam } from "~/services/request.server";
import type { Route } from "./+types/run";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Run ${data?.screen.serviceDate ?? ""} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.crew);
  const date = dateParam(params.date);
  const screen = await crewRunScreen(db, user, date);
  const field = user.crewId ? await crewFieldRun(db, user.crewId, date) : null;
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
