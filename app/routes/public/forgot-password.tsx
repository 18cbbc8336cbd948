import { useState } from "react";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { Button } from "~/components/ui/button";
import { Field, FormMessage } from "~/components/ui/field";
import { checkBeforeSending } from "~/forms/check-before-sending";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { forgotPasswordSchema } from "~/forms/profile";
import { requestPasswordReset, RESET_LINK_MINUTES } from "~/models/password-resets.server";
import { db } from "~/services/db.server";
import { homeFor, optionalUser } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import { clientAddress, waitText } from "~/services/sign-in-limits.server";
import type { Route } from "./+types/forgot-password";

// "Forgot your password?": every valid address gets the same answer, and only an active
// account's inbox gets a link (app/models/password-resets.server.ts).

export const meta: Route.MetaFunction = () => [{ title: "Forgot your password? · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await optionalUser(request);
  if (user) throw redirect(homeFor(user.role));
  return null;
}

export async function action({ request }: Route.ActionArgs) {
  const user = await optionalUser(request);
  if (user) throw redirect(homeFor(user.role));
  const values = formValues(await readForm(request));
  const typed = typeof values.email === "string" ? values.email : "";
  const parsed = forgotPasswordSchema.safeParse(values);
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error), email: typed }, { status: 400 });
  const asked = await requestPasswordReset(db, { email: parsed.data.email, requestedFrom: clientAddress(request) });
  if (asked.outcome === "network-limit") {
    return data(
      { errors: { form: `Too many requests from your network. Try again in ${waitText(asked.waitMs)}, or ask the office.` } as FieldErrors, email: typed },
      { status: 429 },
    );
  }
  return { sentTo: parsed.data.email, linkMinutes: RESET_LINK_MINUTES };
}

export default function ForgotPassword({ actionData }: Route.ComponentProps) {
  const busy = useNavigation().state === "submitting";
  const [clientErrors, setClientErrors] = useState<FieldErrors | null>(null);
  const linkClass = "font-semibold text-pine-800 underline";
  if (actionData && "sentTo" in actionData) {
    return (
      <div className="mx-auto max-w-md px-4 py-10">
        <h1 className="text-3xl font-bold">Check your inbox</h1>
        <p className="mt-4" role="status">
          If an account uses this address, we have e-mailed a link to <strong className="break-words">{actionData.sentTo}</strong>. It works once, for{" "}
          {actionData.linkMinutes} minutes.
        </p>
        <p className="mt-4 text-ink-soft">
          Nothing arrived after a few minutes? Look in your spam folder, check that this is the address you sign in with, or{" "}
          <Link to="/forgot-password" className={linkClass}>
            ask again
          </Link>
          .
        </p>
        <p className="mt-6">
          <Link to="/sign-in" className={linkClass}>
            Go to sign in
          </Link>
        </p>
      </div>
    );
  }
  const errors = clientErrors ?? actionData?.errors ?? {};
  return (
    <div className="mx-auto max-w-md px-4 py-10">
      <h1 className="text-3xl font-bold">Forgot your password?</h1>
      <p className="mt-2 text-ink-soft">Enter the e-mail address you sign in with. We e-mail you a link to choose a new password.</p>
      <Form
        method="post"
        noValidate
        className="mt-6 flex flex-col gap-4"
        onSubmit={checkBeforeSending(forgotPasswordSchema, setClientErrors)}
      >
        <FormMessage message={errors.form} />
        <Field label="E-mail" name="email" type="email" autoComplete="email" required defaultValue={actionData?.email} error={errors.email} />
        <Button type="submit" disabled={busy}>
          {busy ? "Sending…" : "E-mail me a link"}
        </Button>
      </Form>
      <p className="mt-6">
        Remembered it?{" "}
        <Link to="/sign-in" className={linkClass}>
          Sign in
        </Link>
      </p>
    </div>
  );
}
