import { homeFor, optionalUser } from "~/services/permissions.server";
import { redirect } from "react-router";
import type { Route } from "./+types/forgot-password";

// Being built.
export async function loader({ request }: Route.LoaderArgs) {
  const user = await optionalUser(request);
  if (user) throw redirect(homeFor(user.role));
  return null;
}

export default function Page() {
  return null;
}
