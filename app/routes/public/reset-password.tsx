import { useState } from "react";
import { data, Form, Link, useNavigation } from "react-router";
import { NewPasswordFields } from "~/components/new-password-fields";
import { Button } from "~/components/ui/button";
import { checkBeforeSending } from "~/forms/check-before-sending";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { passwordResetSchema, RESET_LINK_MINUTES } from "~/forms/profile";
import { findPasswordReset, resetPassword } from "~/models/password-resets.server";
import { db } from "~/services/db.server";
import { passwordProblem } from "~/services/password-rules.server";
import { homeFor } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import { createUserSession } from "~/services/session.server";
import { forgetSignInFailures } from "~/services/sign-in-limits.server";
import type { Route } from "./+types/reset-password";

// The link from the "forgot password" e-mail: the token is the key, no sign-in needed.
// Opening the page changes nothing (mail programs open links to preview them); sending the
// form sets the password, ends every session, and signs the person in to their home.

export const meta: Route.MetaFunction = () => [{ title: "Choose a new password · Varroute" }];

const invalidLink = () => data({ invalid: true as const, linkMinutes: RESET_LINK_MINUTES }, { status: 404 });

export async function loader({ params }: Route.LoaderArgs) {
  const holder = await findPasswordReset(db, params.token);
  if (!holder) return invalidLink();
  return { invalid: false as const, email: holder.email };
}

export async function action({ params, request }: Route.ActionArgs) {
  const values = formValues(await readForm(request));
  const holder = await findPasswordReset(db, params.token);
  if (!holder) return invalidLink();
  const parsed = passwordResetSchema.safeParse(values);
  if (!parsed.success) return data({ invalid: false as const, errors: fieldErrors(parsed.error) }, { status: 400 });
  const weak = passwordProblem(parsed.data.password, { email: holder.email, name: holder.name });
  if (weak) return data({ invalid: false as const, errors: { password: weak } as FieldErrors }, { status: 400 });

  const reset = await resetPassword(db, { token: params.token, password: parsed.data.password });
  // Used or expired between the check above and now.
  if (reset.outcome === "invalid") return invalidLink();
  // Whoever was slowed down guessing this account's password is no longer a reason to wait.
  await forgetSignInFailures(reset.email);
  return createUserSession(request, reset.userId, homeFor(reset.role));
}

export default function ResetPassword({ loaderData, actionData }: Route.ComponentProps) {
  const busy = useNavigation().state === "submitting";
  const [clientErrors, setClientErrors] = useState<FieldErrors | null>(null);
  const linkClass = "font-semibold text-pine-800 underline";
  if (loaderData.invalid || actionData?.invalid) {
    return (
      <div className="mx-auto max-w-md px-4 py-10">
        <h1 className="text-3xl font-bold">This link does not work</h1>
        <p className="mt-4">
          A password reset link works once, for {RESET_LINK_MINUTES} minutes. This one has been used, has expired, stopped working when the password was
          changed, or was not copied whole.
        </p>
        <p className="mt-6 flex flex-wrap gap-x-6 gap-y-2">
          <Link to="/forgot-password" className={linkClass}>
            Ask for a new link
          </Link>
          <Link to="/sign-in" className={linkClass}>
            Sign in
          </Link>
        </p>
      </div>
    );
  }
  const errors = clientErrors ?? (actionData && "errors" in actionData ? actionData.errors : {}) ?? {};
  return (
    <div className="mx-auto max-w-md px-4 py-10">
      <h1 className="text-3xl font-bold">Choose a new password</h1>
      <p className="mt-2 text-ink-soft">
        For the account <strong className="break-words">{loaderData.email}</strong>. You are signed out everywhere else once it is set.
      </p>
      <Form
        method="post"
        noValidate
        className="mt-6 flex flex-col gap-4"
        onSubmit={checkBeforeSending(passwordResetSchema, setClientErrors)}
      >
        {/* The account's address, for password managers to file the new password under. */}
        <input type="email" name="username" autoComplete="username" value={loaderData.email} readOnly hidden />
        <NewPasswordFields label="New password" errors={errors} />
        <Button type="submit" disabled={busy}>
          {busy ? "Saving…" : "Set the new password"}
        </Button>
      </Form>
    </div>
  );
}
