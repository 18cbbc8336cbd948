import { useEffect, useRef, useState, type ReactNode } from "react";
import { data, Form, useNavigation } from "react-router";
import type { z } from "zod";
import { AppShell } from "~/components/app-shell";
import { areaNavFor } from "~/components/area-nav";
import { NewPasswordFields } from "~/components/new-password-fields";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { Field, FormMessage } from "~/components/ui/field";
import { roleName } from "~/domain/audit-descriptions";
import { checkBeforeSending } from "~/forms/check-before-sending";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { emailChangeSchema, passwordChangeSchema, profileDetailsSchema, profileIntentOf, type ProfileIntent } from "~/forms/profile";
import { changePassword, EMAIL_CHANGE_LINK_HOURS, loadProfile, requestEmailChange, updateProfileDetails } from "~/models/profile.server";
import { verifyCredentials, type SessionUser } from "~/models/users.server";
import { db } from "~/services/db.server";
import { passwordProblem } from "~/services/password-rules.server";
import { requireUser } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import { sessionToken } from "~/services/session.server";
import { checkPasswordWithinLimits, clientAddress, SignInTooSoon, waitText } from "~/services/sign-in-limits.server";
import type { Route } from "./+types/profile";

// Every signed-in person's own account, whatever their role: who they are, their name and
// phone, their password and their e-mail address. Outside the area layouts, so it draws the
// frame itself, with the navigation of the person's own area.

export const meta: Route.MetaFunction = () => [{ title: "Your profile · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const profile = await loadProfile(db, user.id);
  if (!profile) throw data("This account is not available.", { status: 404 });
  return { profile, linkHours: EMAIL_CHANGE_LINK_HOURS };
}

type ActionResult = { intent: ProfileIntent | null; errors: FieldErrors; values?: Record<string, string>; done?: string };

/** The current password, checked like a sign-in: wrong tries count towards the same limits. A message for its field, or null when right. */
async function currentPasswordProblem(request: Request, user: SessionUser, password: string): Promise<string | null> {
  try {
    const right = await checkPasswordWithinLimits(user.email, clientAddress(request), async () =>
      (await verifyCredentials(db, user.email, password)) === user.id ? true : null,
    );
    return right ? null : "That is not your current password.";
  } catch (error) {
    if (error instanceof SignInTooSoon) return `Too many wrong passwords. Try again in ${waitText(error.waitMs)}.`;
    throw error;
  }
}

function text(values: Record<string, string | string[]>, name: string): string {
  const value = values[name];
  return typeof value === "string" ? value : "";
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  const values = formValues(await readForm(request));
  const intent = profileIntentOf(values.intent);
  const refuse = (errors: FieldErrors, kept: Record<string, string> = {}, status = 400) => data<ActionResult>({ intent, errors, values: kept }, { status });
  const parseWith = <T,>(schema: z.ZodType<T>) => schema.safeParse(values);

  switch (intent) {
    case "details": {
      const kept = { name: text(values, "name"), phone: text(values, "phone") };
      const parsed = parseWith(profileDetailsSchema);
      if (!parsed.success) return refuse(fieldErrors(parsed.error), kept);
      const changed = await updateProfileDetails(db, { userId: user.id, name: parsed.data.name, phone: parsed.data.phone });
      return { intent, errors: {}, done: changed ? "Your details are saved." : "Nothing to save: your details are as they were." } satisfies ActionResult;
    }
    case "password": {
      const parsed = parseWith(passwordChangeSchema);
      if (!parsed.success) return refuse(fieldErrors(parsed.error));
      const weak = passwordProblem(parsed.data.password, { email: user.email, name: user.name });
      if (weak) return refuse({ password: weak });
      const wrong = await currentPasswordProblem(request, user, parsed.data.currentPassword);
      if (wrong) return refuse({ currentPassword: wrong }, {}, wrong.startsWith("Too many") ? 429 : 400);
      const ended = await changePassword(db, { userId: user.id, password: parsed.data.password, keepSessionToken: await sessionToken(request) });
      const elsewhere = ended === 0 ? "You were not signed in anywhere else." : `You were signed out on ${ended === 1 ? "1 other device" : `${ended} other devices`}.`;
      return { intent, errors: {}, done: `Your password is changed. ${elsewhere}` } satisfies ActionResult;
    }
    case "email": {
      const kept = { newEmail: text(values, "newEmail") };
      const parsed = parseWith(emailChangeSchema);
      if (!parsed.success) return refuse(fieldErrors(parsed.error), kept);
      const wrong = await currentPasswordProblem(request, user, parsed.data.currentPassword);
      if (wrong) return refuse({ currentPassword: wrong }, kept, wrong.startsWith("Too many") ? 429 : 400);
      const asked = await requestEmailChange(db, { userId: user.id, newEmail: parsed.data.newEmail, requestedFrom: clientAddress(request) });
      switch (asked.outcome) {
        case "same":
          return refuse({ newEmail: "This is your e-mail address already." }, kept);
        case "taken":
          // Only someone who knows this account's password gets this far, a few tries at a time.
          return refuse({ newEmail: "This address cannot be used for your account. Choose another one." }, kept, 409);
        case "too-many":
          return refuse({ newEmail: "You asked for 3 links in the last hour. Use the newest one, or try again later." }, kept, 429);
        case "sent":
          return {
            intent,
            errors: {},
            done: `We e-mailed a link to ${parsed.data.newEmail}. Your address changes when you follow it, within ${EMAIL_CHANGE_LINK_HOURS} hours.`,
          } satisfies ActionResult;
      }
    }
  }
  return refuse({ form: "Send one of the forms on this page." });
}

function Section({ title, children }: { title: string; children: ReactNode }) {
  return (
    <Card title={title} className="h-full">
      {children}
    </Card>
  );
}

export default function ProfilePage({ loaderData, actionData }: Route.ComponentProps) {
  const { profile, linkHours } = loaderData;
  const navigation = useNavigation();
  const sending = navigation.state === "submitting" ? profileIntentOf(navigation.formData?.get("intent")) : null;
  const [clientErrors, setClientErrors] = useState<{ intent: ProfileIntent; errors: FieldErrors } | null>(null);
  const passwordForm = useRef<HTMLFormElement>(null);
  const emailForm = useRef<HTMLFormElement>(null);
  const result = actionData as ActionResult | undefined;

  // A password or address form empties once its change is made.
  useEffect(() => {
    if (!result?.done) return;
    if (result.intent === "password") passwordForm.current?.reset();
    if (result.intent === "email") emailForm.current?.reset();
  }, [result]);

  const errorsOf = (intent: ProfileIntent): FieldErrors => {
    if (clientErrors?.intent === intent) return clientErrors.errors;
    return result?.intent === intent ? result.errors : {};
  };
  const doneOf = (intent: ProfileIntent) => (result?.intent === intent && !clientErrors ? result.done : undefined);
  const kept = (intent: ProfileIntent, name: string) => (result?.intent === intent && !result.done ? result.values?.[name] : undefined);
  const setErrorsFor = (intent: ProfileIntent) => (errors: FieldErrors | null) => setClientErrors(errors ? { intent, errors } : null);
  const { nav, width } = areaNavFor(profile.role);

  const details = errorsOf("details");
  const password = errorsOf("password");
  const email = errorsOf("email");

  return (
    <AppShell user={{ name: profile.name, role: profile.role }} nav={nav} width={width}>
      <PageHeader title="Your profile" subtitle="Your name and phone, your password, and the e-mail address you sign in with." />
      {result?.intent === null ? <FormMessage message={result.errors.form} /> : null}
      <div className="grid gap-6 lg:grid-cols-2">
        <Section title="Your account">
          <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-2">
            <dt className="font-semibold">Name</dt>
            <dd className="min-w-0 break-words">{profile.name}</dd>
            <dt className="font-semibold">E-mail</dt>
            <dd className="min-w-0 break-words">{profile.email}</dd>
            <dt className="font-semibold">Phone</dt>
            <dd className="min-w-0 break-words">{profile.phone ?? "Not given"}</dd>
            <dt className="font-semibold">Role</dt>
            <dd>{roleName(profile.role)}</dd>
          </dl>
          {profile.pendingEmail ? (
            <p className="mt-3 rounded-lg border-2 border-ochre-500 bg-ochre-100 px-4 py-3">
              Waiting for you to follow the link we e-mailed to <strong className="break-words">{profile.pendingEmail}</strong>. Until then you sign in with{" "}
              <span className="break-words">{profile.email}</span>.
            </p>
          ) : null}
        </Section>

        <Section title="Your name and phone">
          <Form method="post" noValidate className="flex flex-col gap-4" onSubmit={checkBeforeSending(profileDetailsSchema, setErrorsFor("details"))}>
            <input type="hidden" name="intent" value="details" />
            <FormMessage tone="info" message={doneOf("details")} />
            <Field label="Your name" name="name" autoComplete="name" required defaultValue={kept("details", "name") ?? profile.name} error={details.name} />
            <Field
              label="Phone (optional)"
              name="phone"
              type="tel"
              autoComplete="tel"
              defaultValue={kept("details", "phone") ?? profile.phone ?? ""}
              error={details.phone}
              hint={profile.role === "customer" ? "The crew calls this number if they cannot find the yard." : undefined}
            />
            <Button type="submit" disabled={sending === "details"}>
              {sending === "details" ? "Saving…" : "Save my details"}
            </Button>
          </Form>
        </Section>

        <Section title="Change your password">
          <Form method="post" noValidate ref={passwordForm} className="flex flex-col gap-4" onSubmit={checkBeforeSending(passwordChangeSchema, setErrorsFor("password"))}>
            <input type="hidden" name="intent" value="password" />
            <input type="email" name="username" autoComplete="username" value={profile.email} readOnly hidden />
            <FormMessage tone="info" message={doneOf("password")} />
            <Field label="Current password" name="currentPassword" type="password" autoComplete="current-password" required error={password.currentPassword} />
            <NewPasswordFields label="New password" errors={password} advice="You stay signed in here; every other device is signed out." />
            <Button type="submit" disabled={sending === "password"}>
              {sending === "password" ? "Changing…" : "Change my password"}
            </Button>
          </Form>
        </Section>

        <Section title="Change your e-mail address">
          <Form method="post" noValidate ref={emailForm} className="flex flex-col gap-4" onSubmit={checkBeforeSending(emailChangeSchema, setErrorsFor("email"))}>
            <input type="hidden" name="intent" value="email" />
            <FormMessage tone="info" message={doneOf("email")} />
            <Field
              label="New e-mail address"
              name="newEmail"
              type="email"
              autoComplete="email"
              required
              defaultValue={kept("email", "newEmail")}
              error={email.newEmail}
              hint={`We e-mail a link to the new address; it becomes your sign-in when you follow the link within ${linkHours} hours. Your current address gets a notice.`}
            />
            <Field label="Current password" name="currentPassword" type="password" autoComplete="current-password" required error={email.currentPassword} />
            <Button type="submit" disabled={sending === "email"}>
              {sending === "email" ? "Sending…" : "E-mail me a link"}
            </Button>
          </Form>
        </Section>
      </div>
    </AppShell>
  );
}
