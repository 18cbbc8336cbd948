import { useState } from "react";
import { data, Form, Link, useNavigation } from "react-router";
import { NewPasswordFields } from "~/components/new-password-fields";
import { Button } from "~/components/ui/button";
import { Field } from "~/components/ui/field";
import { signUpSchema } from "~/forms/account";
import { checkBeforeSending } from "~/forms/check-before-sending";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { requestSignUp, SIGN_UP_LINK_HOURS } from "~/models/sign-up-requests.server";
import { db } from "~/services/db.server";
import { passwordProblem } from "~/services/password-rules.server";
import { homeFor, optionalUser } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import { createUserSession } from "~/services/session.server";
import type { Route } from "./+types/sign-up";

export const meta: Route.MetaFunction = () => [{ title: "Create an account · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await optionalUser(request);
  if (user) return createUserSession(request, user.id, homeFor(user.role));
  return null;
}

export async function action({ request }: Route.ActionArgs) {
  const values = formValues(await readForm(request));
  const parsed = signUpSchema.safeParse(values);
  const kept = { name: values.name, email: values.email, phone: values.phone };
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error), values: kept }, { status: 400 });
  const weak = passwordProblem(parsed.data.password, parsed.data);
  if (weak) return data({ errors: { password: weak } as FieldErrors, values: kept }, { status: 400 });
  // The same answer whether or not the address has an account: only its inbox learns which.
  await requestSignUp(db, parsed.data);
  return { checkInbox: parsed.data.email, linkHours: SIGN_UP_LINK_HOURS };
}

export default function SignUp({ actionData }: Route.ComponentProps) {
  const busy = useNavigation().state === "submitting";
  const [clientErrors, setClientErrors] = useState<FieldErrors | null>(null);
  if (actionData && "checkInbox" in actionData) return <CheckYourInbox email={actionData.checkInbox} linkHours={actionData.linkHours} />;
  const errors = clientErrors ?? actionData?.errors ?? {};
  const kept = actionData?.values as Record<string, string> | undefined;
  return (
    <div className="mx-auto max-w-md px-4 py-10">
      <h1 className="text-3xl font-bold">Create your account</h1>
      <p className="mt-2 text-ink-soft">
        Put your yards on the map and book a treatment visit on a day that still has room.
      </p>
      <Form
        method="post"
        noValidate
        className="mt-6 flex flex-col gap-4"
        onSubmit={checkBeforeSending(signUpSchema, setClientErrors)}
      >
        <Field label="Your name" name="name" autoComplete="name" required defaultValue={kept?.name} error={errors.name} />
        <Field label="E-mail" name="email" type="email" autoComplete="email" required defaultValue={kept?.email} error={errors.email} />
        <Field label="Phone (optional)" name="phone" type="tel" autoComplete="tel" defaultValue={kept?.phone} error={errors.phone} hint="The crew calls this number if they cannot find the yard." />
        <NewPasswordFields errors={errors} />
        <Button type="submit" disabled={busy}>
          {busy ? "Signing up…" : "Create account"}
        </Button>
      </Form>
      <p className="mt-6">
        Already have an account?{" "}
        <Link to="/sign-in" className="font-semibold text-pine-800 underline">
          Sign in
        </Link>
      </p>
    </div>
  );
}

function CheckYourInbox({ email, linkHours }: { email: string; linkHours: number }) {
  return (
    <div className="mx-auto max-w-md px-4 py-10">
      <h1 className="text-3xl font-bold">Check your inbox</h1>
      <p className="mt-4">
        We sent an e-mail to <strong className="break-words">{email}</strong>. Follow the link in it within {linkHours} hours to
        finish creating your account. If this address already has an account, the e-mail says how to sign in instead.
      </p>
      <p className="mt-4 text-ink-soft">
        Nothing arrived after a few minutes? Look in your spam folder, or{" "}
        <Link to="/sign-up" className="font-semibold text-pine-800 underline">
          sign up again
        </Link>
        .
      </p>
      <p className="mt-6">
        <Link to="/sign-in" className="font-semibold text-pine-800 underline">
          Go to sign in
        </Link>
      </p>
    </div>
  );
}
