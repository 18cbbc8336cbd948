import { Link } from "react-router";
import { buttonClass } from "~/components/ui/button";
import { FormMessage } from "~/components/ui/field";
import { YardDetails } from "~/components/yard-details";
import { yardPageData } from "~/models/yard-plan.server";
import { getYardForCustomer } from "~/models/yards.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import type { Route } from "./+types/yard";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.yard.name ?? "Yard"} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  // getYardForCustomer takes the id as text; idParam first, so an id past bigint is a 404, not a 500.
  const yard = await getYardForCustomer(db, user.customerId, String(idParam(params.yardId, "yard")), await businessToday(db));
  return { ...(await yardPageData(db, yard)), saved: new URL(request.url).searchParams.has("saved") };
}

export default function PortalYard({ loaderData }: Route.ComponentProps) {
  return (
    <>
      <Link to="/portal" className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← My yards
      </Link>
      {loaderData.saved ? (
        <div className="mb-4">
          <FormMessage tone="info" message="Changes saved." />
        </div>
      ) : null}
      <YardDetails
        {...loaderData}
        actions={
          <>
            <Link to={`/portal/yards/${loaderData.yard.id}/edit`} className={buttonClass("secondary")}>
              Edit yard and photos
            </Link>
            {loaderData.yard.nextVisitDate ? null : (
              <Link to={`/portal/book?yard=${loaderData.yard.id}`} className={buttonClass("primary")}>
                Book this yard
              </Link>
            )}
          </>
        }
      />
    </>
  );
}
