import { CrewRunView } from "~/components/crew-run-view";
import { crewRunScreen } from "~/models/crew-run.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/home";

export const meta: Route.MetaFunction = () => [{ title: "Today's run · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.crew);
  return crewRunScreen(db, user, null);
}

export default function CrewHome({ loaderData }: Route.ComponentProps) {
  return <CrewRunView screen={loaderData} title="Today's run" />;
}
