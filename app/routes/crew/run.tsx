import { data } from "react-router";
import { CrewRunView } from "~/components/crew-run-view";
import { formatServiceDate } from "~/components/format";
import { crewRunScreen } from "~/models/crew-run.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/run";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Run ${data?.serviceDate ?? ""} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, AREA_ROLES.crew);
  if (!/^\d{4}-\d{2}-\d{2}$/.test(params.date)) throw data("That is not a date.", { status: 404 });
  return crewRunScreen(db, user, params.date);
}

export default function CrewRun({ loaderData }: Route.ComponentProps) {
  return <CrewRunView screen={loaderData} title={`Run for ${formatServiceDate(loaderData.serviceDate, false)}`} />;
}
