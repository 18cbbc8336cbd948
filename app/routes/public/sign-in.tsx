import { data, Form, Link, redirect, useNavigation } from "react-router";
import { Button } from "~/components/ui/button";
import { Field, FormMessage } from "~/components/ui/field";
import { authenticator, SignInError } from "~/services/auth.server";
import { homeFor, optionalUser, safeRedirectPath } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import { createUserSession } from "~/services/session.server";
import type { Route } from "./+types/sign-in";

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await optionalUser(request);
  const url = new URL(request.url);
  // Only a same-site path is kept; anything else (an off-site address, control characters)
  // is dropped here, so it never reaches a Location header or the form.
  const redirectTo = safeRedirectPath(url.searchParams.get("redirectTo"), "");
  // Already signed in: on to where they were going. A page view does not touch the session.
  if (user) throw redirect(redirectTo || homeFor(user.role));
  return { signedOut: url.searchParams.has("signedOut"), redirectTo };
}

export async function action({ request }: Route.ActionArgs) {
  const redirectTo = new URL(request.url).searchParams.get("redirectTo");
  // A copy of the body: the form strategy reads the request's own body.
  const form = await readForm(request.clone());
  const email = form.get("email");
  try {
    const user = await authenticator.authenticate("form", request);
    return createUserSession(request, user.id, safeRedirectPath(redirectTo, homeFor(user.role)));
  } catch (error) {
    if (error instanceof Response) throw error;
    if (error instanceof SignInError) {
      return data(
        { email: typeof email === "string" ? email : "", field: error.field, message: error.message },
        { status: error.field === "form" ? 429 : 400 },
      );
    }
    throw error;
  }
}

export default function SignIn({ loaderData, actionData }: Route.ComponentProps) {
  const busy = useNavigation().state === "submitting";
  const fieldError = (name: string) => (actionData?.field === name ? actionData.message : undefined);
  return (
    <div className="mx-auto max-w-md px-4 py-10">
      <h1 className="text-3xl font-bold">Sign in</h1>
      <p className="mt-2 text-ink-soft">Customers, crews and staff all sign in here.</p>
      <Form method="post" action={loaderData.redirectTo ? `?redirectTo=${encodeURIComponent(loaderData.redirectTo)}` : undefined} className="mt-6 flex flex-col gap-4" noValidate>
        {loaderData.signedOut && !actionData ? <FormMessage tone="info" message="You are signed out." /> : null}
        <FormMessage message={fieldError("form")} />
        <Field label="E-mail" name="email" type="email" autoComplete="email" required defaultValue={actionData?.email} error={fieldError("email")} />
        <Field label="Password" name="password" type="password" autoComplete="current-password" required error={fieldError("password")} />
        <Button type="submit" disabled={busy}>
          {busy ? "Signing in…" : "Sign in"}
        </Button>
      </Form>
      <p className="mt-4">
        <Link to="/forgot-password" className="font-semibold text-pine-800 underline">
          Forgot your password?
        </Link>
      </p>
      <p className="mt-6">
        New customer?{" "}
        <Link to="/sign-up" className="font-semibold text-pine-800 underline">
          Create an account
        </Link>
      </p>
    </div>
  );
}
