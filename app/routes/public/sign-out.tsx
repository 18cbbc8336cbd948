import { redirect } from "react-router";
import { destroyUserSession } from "~/services/session.server";
import type { Route } from "./+types/sign-out";

// Signing out is a POST (a link or prefetch must not sign anyone out).
export async function loader() {
  throw redirect("/");
}

// Deletes the session on the server, not only the cookie: a copy of the cookie taken
// earlier no longer signs anyone in.
export async function action({ request }: Route.ActionArgs) {
  return destroyUserSession(request, "/sign-in?signedOut=1");
}
