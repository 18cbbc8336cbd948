import { AREA_ROLES, requireCustomer, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/invoice";

// Placeholder while this page is being built (replaced in the same change set).
export async function loader({ request }: Route.LoaderArgs) {
  void AREA_ROLES;
  void requireCustomer;
  void requireRole;
  await requireCustomer(request);
  return {};
}

export default function Page() {
  return <h1 className="text-2xl font-semibold">Invoice</h1>;
}
