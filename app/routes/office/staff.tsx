import { requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/staff";

// Being built.
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, ["owner"]);
  return null;
}

export default function Page() {
  return null;
}
