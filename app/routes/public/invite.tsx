import { useState } from "react";
import { data, Form, useNavigation } from "react-router";
import { formatInstant } from "~/components/format";
import { NewPasswordFields } from "~/components/new-password-fields";
import { Button } from "~/components/ui/button";
import { FormMessage } from "~/components/ui/field";
import { checkBeforeSending } from "~/forms/check-before-sending";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { acceptInvitationSchema, INVITATION_DAYS, STAFF_ROLE_DUTIES, STAFF_ROLE_NAMES } from "~/forms/staff";
import { loadBusinessSettings } from "~/models/settings.server";
import { acceptInvitation, invitationForToken } from "~/models/staff.server";
import { db } from "~/services/db.server";
import { passwordProblem } from "~/services/password-rules.server";
import { homeFor } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import { createUserSession } from "~/services/session.server";
import type { Route } from "./+types/invite";

// The link from a staff invitation: the invitee sees who invited them to which business and
// for which role, sets a password, and is signed in to their area. No sign-in is needed; the
// token in the link is the key. A link that does not work (unknown, expired, used, withdrawn)
// is a plain 404.

export const meta: Route.MetaFunction = () => [{ title: "Your invitation · Varroute" }];

const NOT_VALID = `This invitation link does not work. An invitation link works once, for ${INVITATION_DAYS} days; this one has been used, has expired, was withdrawn or was not copied whole. Ask whoever invited you to send it again.`;

async function openInvitation(token: string) {
  const invitation = await invitationForToken(db, token);
  if (!invitation) throw data(NOT_VALID, { status: 404 });
  return invitation;
}

export async function loader({ params }: Route.LoaderArgs) {
  const invitation = await openInvitation(params.token);
  const settings = await loadBusinessSettings(db);
  return { invitation, timeZone: settings.timeZone };
}

export async function action({ request, params }: Route.ActionArgs) {
  const invitation = await openInvitation(params.token);
  const values = formValues(await readForm(request));
  const parsed = acceptInvitationSchema.safeParse(values);
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error) }, { status: 400 });
  const weak = passwordProblem(parsed.data.password, { email: invitation.email, name: invitation.name });
  if (weak) return data({ errors: { password: weak } as FieldErrors }, { status: 400 });
  const accepted = await acceptInvitation(db, params.token, { password: parsed.data.password });
  switch (accepted.outcome) {
    case "created":
      return createUserSession(request, accepted.userId, homeFor(accepted.role));
    case "account-exists":
      return data(
        { errors: { form: "This e-mail address has an account now, so the invitation has nothing left to do. Sign in with it instead, or ask for an invitation to another address." } as FieldErrors },
        { status: 409 },
      );
    case "invalid":
      throw data(NOT_VALID, { status: 404 });
  }
}

export default function Invite({ loaderData, actionData }: Route.ComponentProps) {
  const { invitation, timeZone } = loaderData;
  const busy = useNavigation().state === "submitting";
  const [clientErrors, setClientErrors] = useState<FieldErrors | null>(null);
  const errors = clientErrors ?? actionData?.errors ?? {};
  const role = STAFF_ROLE_NAMES[invitation.role];
  return (
    <div className="mx-auto max-w-md px-4 py-10">
      <h1 className="text-3xl font-bold">Join {invitation.businessName}</h1>
      <p className="mt-4">
        Hello {invitation.name}. {invitation.invitedByName} invited you to work in {invitation.businessName}&rsquo;s Varroute as{" "}
        <strong>{role.toLowerCase()}</strong>: {STAFF_ROLE_DUTIES[invitation.role]}.
      </p>
      <dl className="mt-4 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 rounded-lg bg-pine-50 p-4">
        <dt className="font-semibold">Business</dt>
        <dd>{invitation.businessName}</dd>
        <dt className="font-semibold">Role</dt>
        <dd>{role}</dd>
        {invitation.crewName ? (
          <>
            <dt className="font-semibold">Crew</dt>
            <dd>{invitation.crewName}</dd>
          </>
        ) : null}
        <dt className="font-semibold">Invited by</dt>
        <dd>{invitation.invitedByName}</dd>
        <dt className="font-semibold">Your e-mail</dt>
        <dd className="break-all">{invitation.email}</dd>
      </dl>
      <p className="mt-4 text-ink-soft">Set a password to make your account. The link works until {formatInstant(invitation.expiresAt, timeZone)}.</p>
      <Form
        method="post"
        noValidate
        className="mt-6 flex flex-col gap-4"
        onSubmit={checkBeforeSending(acceptInvitationSchema, setClientErrors)}
      >
        <FormMessage message={errors.form} />
        {/* For password managers: the account's user name. */}
        <input type="email" name="username" autoComplete="username" value={invitation.email} readOnly hidden />
        <NewPasswordFields errors={errors} />
        <Button type="submit" disabled={busy}>
          {busy ? "Making your account…" : "Set password and sign in"}
        </Button>
      </Form>
    </div>
  );
}
