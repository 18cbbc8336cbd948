import { requireUser } from "~/services/permissions.server";
import type { Route } from "./+types/profile";

// Being built.
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  return null;
}

export default function Page() {
  return null;
}
