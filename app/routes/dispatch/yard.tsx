import { Link } from "react-router";
import { buttonClass } from "~/components/ui/button";
import { FormMessage } from "~/components/ui/field";
import { YardDetails } from "~/components/yard-details";
import { yardPageData } from "~/models/yard-plan.server";
import { getYard } from "~/models/yards.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import type { Route } from "./+types/yard";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.yard.name ?? "Yard"} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  // getYard takes the id as text; idParam first, so an id past bigint is a 404, not a 500.
  const yard = await getYard(db, String(idParam(params.yardId, "yard")), await businessToday(db));
  return { ...(await yardPageData(db, yard)), saved: new URL(request.url).searchParams.has("saved") };
}

export default function DispatchYard({ loaderData }: Route.ComponentProps) {
  return (
    <>
      <div className="mb-3 flex flex-wrap items-center justify-between gap-3">
        <Link to="/dispatch/yards" className="inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
          ← Yards
        </Link>
        <Link to={`/dispatch/yards/${loaderData.yard.id}/edit`} className={buttonClass("secondary")}>
          Edit this yard
        </Link>
      </div>
      {loaderData.saved ? (
        <div className="mb-4">
          <FormMessage tone="info" message="Yard saved." />
        </div>
      ) : null}
      <YardDetails {...loaderData} showCustomer />
    </>
  );
}
