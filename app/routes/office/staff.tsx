import { useId, useState, type ReactNode } from "react";
import { data, Form, Link, redirect, useLocation, useNavigation } from "react-router";
import { SortableHeader } from "~/components/data-table/sortable-header";
import { formatInstant } from "~/components/format";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { Field, FormMessage } from "~/components/ui/field";
import { Table, Td, Th } from "~/components/ui/table";
import { checkBeforeSending } from "~/forms/check-before-sending";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import {
  inviteStaffSchema,
  readStaffQuery,
  STAFF_ROLE_DUTIES,
  STAFF_ROLE_NAMES,
  STAFF_ROLES,
  STAFF_STATUS_NAMES,
  STAFF_STATUSES,
  staffActionSchema,
  type StaffRole,
  INVITATION_DAYS,
} from "~/forms/staff";
import { loadBusinessSettings } from "~/models/settings.server";
import {
  changeStaffRole,
  crewChoices,
  deactivateStaff,
  inviteStaff,
  listStaff,
  reactivateStaff,
  resendInvitation,
  revokeInvitation,
  StaffChangeRefused,
  type StaffListRow,
} from "~/models/staff.server";
import { db } from "~/services/db.server";
import { homeFor, requireRole } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import type { Route } from "./+types/staff";

// The owner's staff page: everyone who works in the business and every open invitation, in
// one table filtered by role and status and sorted by any column; the invitation form; and
// per row the owner's actions (role, deactivate / reactivate, resend / withdraw). Owner only,
// in the loader and in the action.

export const meta: Route.MetaFunction = () => [{ title: "Staff · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, ["owner"]);
  const query = readStaffQuery(new URL(request.url).searchParams);
  const [list, crews, settings] = await Promise.all([listStaff(db, query), crewChoices(db), loadBusinessSettings(db)]);
  return { ...list, query, crews, timeZone: settings.timeZone, me: Number(user.id) };
}

type ActionResult = {
  ok: boolean;
  intent: string;
  /** The row the result belongs to ("user:3", "invitation:7"); null for the invitation form. */
  target: string | null;
  errors: FieldErrors;
  message?: string;
  /** The invitation form's input, kept when it is refused. */
  values?: Record<string, string>;
};

function refused(intent: string, target: string | null, errors: FieldErrors, status: number, values?: Record<string, string>) {
  return data<ActionResult>({ ok: false, intent, target, errors, values }, { status });
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, ["owner"]);
  const actorUserId = Number(user.id);
  const values = formValues(await readForm(request));
  const intent = typeof values.intent === "string" ? values.intent : "";
  const parsed = staffActionSchema.safeParse(values);
  if (!parsed.success) return refused(intent, null, { form: fieldErrors(parsed.error).intent ?? "The form was not understood. Reload the page and try again." }, 400);
  const input = parsed.data;
  const target =
    input.intent === "invite" ? null : "userId" in input ? `user:${input.userId}` : `invitation:${input.invitationId}`;
  try {
    switch (input.intent) {
      case "invite": {
        const kept = { name: String(values.name ?? ""), email: String(values.email ?? ""), role: String(values.role ?? ""), crewId: String(values.crewId ?? "") };
        const invite = inviteStaffSchema.safeParse(values);
        if (!invite.success) return refused(intent, null, fieldErrors(invite.error), 400, kept);
        try {
          await inviteStaff(db, { actorUserId, ...invite.data });
        } catch (error) {
          if (error instanceof StaffChangeRefused) return refused(intent, null, { [error.field]: error.message }, error.status, kept);
          throw error;
        }
        return { ok: true, intent, target, errors: {}, message: `Invitation sent to ${invite.data.email}. The link works for ${INVITATION_DAYS} days.` } satisfies ActionResult;
      }
      case "role": {
        const { changed } = await changeStaffRole(db, { actorUserId, userId: input.userId, role: input.role });
        // The owner who made themselves something else has no staff page any more.
        if (changed && input.userId === actorUserId) throw redirect(homeFor(input.role));
        return { ok: true, intent, target, errors: {}, message: changed ? `The role is now ${STAFF_ROLE_NAMES[input.role].toLowerCase()}.` : "The role was already that; nothing changed." } satisfies ActionResult;
      }
      case "deactivate": {
        const { changed, sessionsEnded } = await deactivateStaff(db, { actorUserId, userId: input.userId });
        const signedOut = sessionsEnded > 0 ? ` and signed out of ${sessionsEnded} ${sessionsEnded === 1 ? "session" : "sessions"}` : "";
        return { ok: true, intent, target, errors: {}, message: changed ? `Deactivated${signedOut}. They can no longer sign in.` : "The account was deactivated already." } satisfies ActionResult;
      }
      case "reactivate": {
        const { changed } = await reactivateStaff(db, { actorUserId, userId: input.userId });
        return { ok: true, intent, target, errors: {}, message: changed ? "Reactivated: they can sign in again with their password." : "The account was active already." } satisfies ActionResult;
      }
      case "resend": {
        await resendInvitation(db, { actorUserId, invitationId: input.invitationId });
        return { ok: true, intent, target, errors: {}, message: `Invitation sent again with a new link, good for ${INVITATION_DAYS} days. The old link no longer works.` } satisfies ActionResult;
      }
      case "revoke": {
        await revokeInvitation(db, { actorUserId, invitationId: input.invitationId });
        return { ok: true, intent, target, errors: {}, message: "Invitation withdrawn: its link no longer works." } satisfies ActionResult;
      }
    }
  } catch (error) {
    if (error instanceof StaffChangeRefused) return refused(intent, target, { [error.field]: error.message }, error.status);
    throw error;
  }
}

const selectStyle = "min-h-11 rounded-lg border-2 border-line bg-card px-2 text-base focus:border-pine-600";

function Select({ label, name, defaultValue, error, hint, children }: { label: string; name: string; defaultValue?: string; error?: string; hint?: string; children: ReactNode }) {
  const id = useId();
  const describedBy = [error ? `${id}-error` : null, hint ? `${id}-hint` : null].filter(Boolean).join(" ") || undefined;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="font-semibold">
        {label}
      </label>
      {hint ? (
        <p id={`${id}-hint`} className="text-sm text-ink-soft">
          {hint}
        </p>
      ) : null}
      <select
        id={id}
        name={name}
        defaultValue={defaultValue}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy}
        className={`${selectStyle} ${error ? "border-alarm-700" : ""}`}
      >
        {children}
      </select>
      {error ? (
        <p id={`${id}-error`} className="text-sm font-semibold text-alarm-700">
          {error}
        </p>
      ) : null}
    </div>
  );
}

function InviteForm({ crews, result }: { crews: { id: number; name: string }[]; result: ActionResult | undefined }) {
  const busy = useNavigation().state === "submitting";
  const [clientErrors, setClientErrors] = useState<FieldErrors | null>(null);
  const mine = result?.intent === "invite" ? result : undefined;
  const errors = clientErrors ?? (mine && !mine.ok ? mine.errors : {});
  const kept = mine && !mine.ok ? mine.values : undefined;
  return (
    <Card title="Invite someone">
      <p className="mb-4 text-ink-soft">
        They get an e-mail with a link to set their password; the link works once, for {INVITATION_DAYS} days. Customers sign up themselves.
      </p>
      <Form
        method="post"
        noValidate
        aria-label="Invite someone"
        // A fresh, empty form after each invitation sent.
        key={mine?.ok ? mine.message : "invite"}
        className="grid gap-4 sm:grid-cols-2"
        onSubmit={checkBeforeSending(inviteStaffSchema, setClientErrors)}
      >
        <input type="hidden" name="intent" value="invite" />
        <Field label="Name" name="name" autoComplete="off" required defaultValue={kept?.name} error={errors.name} />
        <Field label="E-mail" name="email" type="email" autoComplete="off" required defaultValue={kept?.email} error={errors.email} />
        <Select label="Role" name="role" defaultValue={kept?.role || "office"} error={errors.role}>
          {STAFF_ROLES.map((role) => (
            <option key={role} value={role}>
              {STAFF_ROLE_NAMES[role]}: {STAFF_ROLE_DUTIES[role]}
            </option>
          ))}
        </Select>
        <Select label="Crew" name="crewId" defaultValue={kept?.crewId ?? ""} error={errors.crewId} hint="For the crew role only. Leave it for the dispatcher to choose later if you like.">
          <option value="">No crew yet</option>
          {crews.map((crew) => (
            <option key={crew.id} value={String(crew.id)}>
              {crew.name}
            </option>
          ))}
        </Select>
        <div className="sm:col-span-2">
          <Button type="submit" disabled={busy}>
            {busy ? "Sending…" : "Send the invitation"}
          </Button>
        </div>
      </Form>
    </Card>
  );
}

function RowMessage({ result, row }: { result: ActionResult | undefined; row: StaffListRow }) {
  if (!result || result.target !== row.key) return null;
  const message = result.ok ? result.message : Object.values(result.errors)[0];
  if (!message) return null;
  return (
    <p role={result.ok ? "status" : "alert"} className={`mt-2 text-sm font-semibold ${result.ok ? "text-pine-800" : "text-alarm-700"}`}>
      {message}
    </p>
  );
}

function MemberActions({ row, me }: { row: StaffListRow; me: number }) {
  const roleId = `role-${row.key.replace(":", "-")}`;
  return (
    <div className="flex flex-wrap items-end gap-2">
      <Form method="post" preventScrollReset className="flex items-end gap-2">
        <input type="hidden" name="intent" value="role" />
        <input type="hidden" name="userId" value={row.id} />
        <label htmlFor={roleId} className="sr-only">
          Role of {row.name}
        </label>
        <select id={roleId} name="role" defaultValue={row.role} key={row.role} className={selectStyle}>
          {STAFF_ROLES.map((role) => (
            <option key={role} value={role}>
              {STAFF_ROLE_NAMES[role]}
            </option>
          ))}
        </select>
        <Button type="submit" variant="secondary" className="px-3" aria-label={`Change role of ${row.name}`}>
          Change role
        </Button>
      </Form>
      {row.id === me ? null : (
        <Form method="post" preventScrollReset>
          <input type="hidden" name="intent" value={row.status === "active" ? "deactivate" : "reactivate"} />
          <input type="hidden" name="userId" value={row.id} />
          {row.status === "active" ? (
            <Button type="submit" variant="danger" className="px-3" aria-label={`Deactivate ${row.name}`}>
              Deactivate
            </Button>
          ) : (
            <Button type="submit" variant="secondary" className="px-3" aria-label={`Reactivate ${row.name}`}>
              Reactivate
            </Button>
          )}
        </Form>
      )}
    </div>
  );
}

function InvitationActions({ row }: { row: StaffListRow }) {
  return (
    <div className="flex flex-wrap gap-2">
      <Form method="post" preventScrollReset>
        <input type="hidden" name="intent" value="resend" />
        <input type="hidden" name="invitationId" value={row.id} />
        <Button type="submit" variant="secondary" className="px-3" aria-label={`Send again to ${row.name}`}>
          Send again
        </Button>
      </Form>
      <Form method="post" preventScrollReset>
        <input type="hidden" name="intent" value="revoke" />
        <input type="hidden" name="invitationId" value={row.id} />
        <Button type="submit" variant="danger" className="px-3" aria-label={`Withdraw the invitation to ${row.name}`}>
          Withdraw
        </Button>
      </Form>
    </div>
  );
}

function StatusCell({ row, timeZone }: { row: StaffListRow; timeZone: string }) {
  if (row.kind === "member") {
    return row.status === "active" ? <span>Active</span> : <span className="font-semibold text-alarm-700">Deactivated</span>;
  }
  return (
    <>
      <span className="font-semibold text-ochre-700">Invited</span>
      <span className="block text-sm text-ink-soft">
        {row.expired ? "Link expired: send it again" : `Link works until ${formatInstant(row.expiresAt!, timeZone)}`}
        {row.invitedByName ? ` · by ${row.invitedByName}` : ""}
      </span>
    </>
  );
}

export default function OfficeStaff({ loaderData, actionData }: Route.ComponentProps) {
  const { rows, total, query, crews, timeZone, me } = loaderData;
  const location = useLocation();
  const result = actionData as ActionResult | undefined;
  const filtered = query.role !== "all" || query.status !== "all";
  const header = (column: string, label: string) => <SortableHeader column={column} label={label} sort={query.sort} dir={query.dir} firstDir={column === "lastSeen" ? "desc" : "asc"} />;
  // Sorting stays when the filters change.
  const kept = new URLSearchParams(location.search);
  const clearParams = new URLSearchParams([...kept.entries()].filter(([key]) => key === "sort" || key === "dir"));
  return (
    <>
      <PageHeader title="Staff" subtitle="Everyone who works in the business: invite people, change what they may do, and deactivate accounts that should no longer sign in." />
      <div className="flex flex-col gap-6">
        {result && result.target === null && result.intent !== "invite" && !result.ok && result.errors.form ? <FormMessage message={result.errors.form} /> : null}
        {result?.ok && result.intent === "invite" ? <FormMessage tone="info" message={result.message} /> : null}

        <section aria-labelledby="staff-list-heading">
          <h2 id="staff-list-heading" className="sr-only">
            Staff and invitations
          </h2>
          <Form method="get" action={location.pathname} role="search" aria-label="Filter staff" className="mb-4 flex flex-wrap items-end gap-3">
            {[...clearParams.entries()].map(([key, value]) => (
              <input key={key} type="hidden" name={key} value={value} />
            ))}
            <Select label="Role" name="role" defaultValue={query.role} key={`role-${query.role}`}>
              <option value="all">Every role</option>
              {STAFF_ROLES.map((role) => (
                <option key={role} value={role}>
                  {STAFF_ROLE_NAMES[role]}
                </option>
              ))}
            </Select>
            <Select label="Status" name="status" defaultValue={query.status} key={`status-${query.status}`}>
              <option value="all">Every status</option>
              {STAFF_STATUSES.map((status) => (
                <option key={status} value={status}>
                  {STAFF_STATUS_NAMES[status]}
                </option>
              ))}
            </Select>
            <Button type="submit">Show</Button>
            {filtered ? (
              <Link to={clearParams.size ? `${location.pathname}?${clearParams}` : location.pathname} className="inline-flex min-h-11 items-center px-2 font-semibold text-pine-800 underline underline-offset-4">
                Clear
              </Link>
            ) : null}
          </Form>
          <Table
            caption="Staff and open invitations"
            empty={filtered ? "Nobody matches these filters." : "No staff yet."}
            head={
              <>
                {header("name", "Name")}
                {header("email", "E-mail")}
                {header("role", "Role")}
                <Th>Crew</Th>
                {header("status", "Status")}
                {header("lastSeen", "Last seen")}
                <Th>Actions</Th>
              </>
            }
          >
            {rows.map((row) => (
              <tr key={row.key}>
                <Td className="font-semibold">
                  {row.name}
                  {row.id === me && row.kind === "member" ? <span className="block text-sm font-normal text-ink-soft">You</span> : null}
                </Td>
                <Td className="break-all">{row.email}</Td>
                <Td>{STAFF_ROLE_NAMES[row.role as StaffRole]}</Td>
                <Td>{row.crewName ?? <span className="text-ink-soft">—</span>}</Td>
                <Td>
                  <StatusCell row={row} timeZone={timeZone} />
                </Td>
                <Td className="whitespace-nowrap">{row.lastSeenAt ? formatInstant(row.lastSeenAt, timeZone) : <span className="text-ink-soft">—</span>}</Td>
                <Td>
                  {row.kind === "member" ? <MemberActions row={row} me={me} /> : <InvitationActions row={row} />}
                  <RowMessage result={result} row={row} />
                </Td>
              </tr>
            ))}
          </Table>
          <p className="mt-3 font-semibold" aria-live="polite">
            {rows.length === total ? `${total} ${total === 1 ? "row" : "rows"}` : `Showing ${rows.length} of ${total} rows`}
          </p>
        </section>

        <InviteForm crews={crews} result={result} />
        <p className="text-sm text-ink-soft">
          Deactivating someone signs them out everywhere at once; reactivating lets them sign in again with their old password. The business always keeps at least one
          active owner.
        </p>
      </div>
    </>
  );
}
