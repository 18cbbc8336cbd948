import { AREA_ROLES, requireCustomer, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/invoice-receipt";

// Placeholder while this resource is being built (replaced in the same change set).
export async function loader({ request }: Route.LoaderArgs) {
  void AREA_ROLES;
  void requireCustomer;
  void requireRole;
  await requireCustomer(request);
  return new Response("", { status: 200 });
}
