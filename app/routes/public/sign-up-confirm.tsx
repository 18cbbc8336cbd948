import { data, Link } from "react-router";
import { confirmSignUp, SIGN_UP_LINK_HOURS } from "~/models/sign-up-requests.server";
import { db } from "~/services/db.server";
import { createUserSession } from "~/services/session.server";
import type { Route } from "./+types/sign-up-confirm";

// The link from the sign-up e-mail: it makes the account, signs the person in and opens the
// portal. No sign-in is needed to follow it; the token in the link is the key.

export const meta: Route.MetaFunction = () => [{ title: "Confirm your sign-up · Varroute" }];

export async function loader({ params, request }: Route.LoaderArgs) {
  const confirmation = await confirmSignUp(db, params.token);
  switch (confirmation.outcome) {
    case "created":
      return createUserSession(request, confirmation.userId, "/portal");
    case "account-exists":
      return data({ outcome: confirmation.outcome }, { status: 409 });
    case "invalid":
      return data({ outcome: confirmation.outcome, linkHours: SIGN_UP_LINK_HOURS }, { status: 404 });
  }
}

export default function SignUpConfirm({ loaderData }: Route.ComponentProps) {
  const linkClass = "font-semibold text-pine-800 underline";
  if (loaderData.outcome === "account-exists") {
    return (
      <div className="mx-auto max-w-md px-4 py-10">
        <h1 className="text-3xl font-bold">You already have an account</h1>
        <p className="mt-4">This e-mail address has an account now, so the link has nothing left to do. Sign in with the address and its password.</p>
        <p className="mt-6">
          <Link to="/sign-in" className={linkClass}>
            Sign in
          </Link>
        </p>
      </div>
    );
  }
  return (
    <div className="mx-auto max-w-md px-4 py-10">
      <h1 className="text-3xl font-bold">This link does not work</h1>
      <p className="mt-4">
        A sign-up link works once, for {loaderData.linkHours} hours. This one has been used, has expired, or was not copied whole. If your account was made with
        it, sign in; otherwise sign up again for a new link.
      </p>
      <p className="mt-6 flex flex-wrap gap-x-6 gap-y-2">
        <Link to="/sign-up" className={linkClass}>
          Sign up again
        </Link>
        <Link to="/sign-in" className={linkClass}>
          Sign in
        </Link>
      </p>
    </div>
  );
}
