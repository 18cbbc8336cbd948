import { CrewField } from "~/components/crew/crew-field";
import { ComingRuns, CrewRunView } from "~/components/crew-run-view";
import { crewFieldRun } from "~/models/crew-field.server";
import { crewRunScreen } from "~/models/crew-run.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/home";

export const meta: Route.MetaFunction = () => [{ title: "Today's run · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.crew);
  const screen = await crewRunScreen(db, user, null);
  const field = user.crewId ? await crewFieldRun(db, user.crewId, screen.serviceDate) : null;
  return { screen, field };
}

export default function CrewHome({ loaderData }: Route.ComponentProps) {
  if (loaderData.field)
    return (
      <>
        <CrewField serverRun={loaderData.field} title={"Today's run"} />
        <ComingRuns coming={loaderData.screen.coming} />
      </>
    );
  return <CrewRunView screen={loaderData.screen} title="Today's run" />;
}
