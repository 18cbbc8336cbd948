import { Link } from "react-router";
import { YardDetails } from "~/components/yard-details";
import { yardPageData } from "~/models/yard-plan.server";
import { getYard } from "~/models/yards.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/yard";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.yard.name ?? "Yard"} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const yard = await getYard(db, params.yardId, await businessToday(db));
  return yardPageData(db, yard);
}

export default function DispatchYard({ loaderData }: Route.ComponentProps) {
  return (
    <>
      <Link to="/dispatch/yards" className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← Yards
      </Link>
      <YardDetails {...loaderData} showCustomer />
    </>
  );
}
