import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/crew-new";

// Being built.
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  return null;
}

export default function Page() {
  return null;
}
