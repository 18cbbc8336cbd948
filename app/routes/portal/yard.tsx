import { Link } from "react-router";
import { YardDetails } from "~/components/yard-details";
import { yardPageData } from "~/models/yard-plan.server";
import { getYardForCustomer } from "~/models/yards.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import type { Route } from "./+types/yard";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.yard.name ?? "Yard"} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const yard = await getYardForCustomer(db, user.customerId, params.yardId, await businessToday(db));
  return yardPageData(db, yard);
}

export default function PortalYard({ loaderData }: Route.ComponentProps) {
  return (
    <>
      <Link to="/portal" className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← My yards
      </Link>
      <YardDetails {...loaderData} />
    </>
  );
}
