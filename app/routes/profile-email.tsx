import type { ReactNode } from "react";
import { data, Link } from "react-router";
import { LogoMark } from "~/components/logo-mark";
import { confirmEmailChange, EMAIL_CHANGE_LINK_HOURS } from "~/models/profile.server";
import { db } from "~/services/db.server";
import { optionalUser } from "~/services/permissions.server";
import type { Route } from "./+types/profile-email";

// The link e-mailed to a new address from the profile page: following it makes the address
// the account's sign-in. The token is the key, so it works in any browser, signed in or not.

export const meta: Route.MetaFunction = () => [{ title: "Confirm your new e-mail address · Varroute" }];

export async function loader({ params, request }: Route.LoaderArgs) {
  const confirmation = await confirmEmailChange(db, params.token);
  switch (confirmation.outcome) {
    case "changed": {
      const visitor = await optionalUser(request);
      return { outcome: confirmation.outcome, newEmail: confirmation.newEmail, signedIn: visitor?.id === confirmation.userId };
    }
    case "taken":
      return data({ outcome: confirmation.outcome }, { status: 409 });
    case "invalid":
      return data({ outcome: confirmation.outcome, linkHours: EMAIL_CHANGE_LINK_HOURS }, { status: 404 });
  }
}

function Frame({ title, children }: { title: string; children: ReactNode }) {
  return (
    <div className="min-h-screen">
      <header className="border-b border-line bg-card">
        <div className="mx-auto flex max-w-5xl items-center px-4 py-2">
          <Link to="/" className="flex min-h-11 items-center gap-2 text-xl font-bold text-pine-800">
            <LogoMark className="h-9 w-9" />
            Varroute
          </Link>
        </div>
      </header>
      <main id="main" className="mx-auto max-w-md px-4 py-10">
        <h1 className="text-3xl font-bold">{title}</h1>
        {children}
      </main>
    </div>
  );
}

export default function ProfileEmail({ loaderData }: Route.ComponentProps) {
  const linkClass = "font-semibold text-pine-800 underline";
  switch (loaderData.outcome) {
    case "changed":
      return (
        <Frame title="Your e-mail address is changed">
          <p className="mt-4" role="status">
            From now on you sign in with <strong className="break-words">{loaderData.newEmail}</strong>, and our e-mails go there.
          </p>
          <p className="mt-6">
            {loaderData.signedIn ? (
              <Link to="/profile" className={linkClass}>
                Back to your profile
              </Link>
            ) : (
              <Link to="/sign-in" className={linkClass}>
                Sign in
              </Link>
            )}
          </p>
        </Frame>
      );
    case "taken":
      return (
        <Frame title="This address cannot be used">
          <p className="mt-4">Another account signs in with this address now, so your account keeps its old one. Choose another address on your profile.</p>
          <p className="mt-6">
            <Link to="/profile" className={linkClass}>
              Go to your profile
            </Link>
          </p>
        </Frame>
      );
    case "invalid":
      return (
        <Frame title="This link does not work">
          <p className="mt-4">
            A link to confirm a new e-mail address works once, for {loaderData.linkHours} hours, and only the newest one you asked for. This one has been used,
            has expired, was replaced, or was not copied whole.
          </p>
          <p className="mt-6 flex flex-wrap gap-x-6 gap-y-2">
            <Link to="/profile" className={linkClass}>
              Ask again on your profile
            </Link>
            <Link to="/sign-in" className={linkClass}>
              Sign in
            </Link>
          </p>
        </Frame>
      );
  }
}
