import { redirect } from "react-router";
import { destroyUserSession } from "~/services/session.server";
import type { Route } from "./+types/sign-out";

// Signing out is a POST (a link or prefetch must not sign anyone out).
export async function loader() {
  throw redirect("/");
}

export async function action({ request }: Route.ActionArgs) {
  return destroyUserSession(request, "/sign-in?signedOut=1");
}
