import { AREA_ROLES, requireCustomer, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/dashboard";

// Placeholder while this page is being built (replaced in the same change set).
export async function loader({ request }: Route.LoaderArgs) {
  void AREA_ROLES;
  void requireCustomer;
  void requireRole;
  await requireRole(request, AREA_ROLES.office);
  return {};
}

export default function Page() {
  return <h1 className="text-2xl font-semibold">Season dashboard</h1>;
}
