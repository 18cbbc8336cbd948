import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/booking-change";

// Being built.
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.portal);
  return null;
}

export default function Page() {
  return null;
}
