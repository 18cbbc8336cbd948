import { z } from "zod";
import { newPasswordSchema } from "./account";

// The owner's staff page and the invitation page: one schema per form, shared by the browser
// (instant messages) and the server, and the staff table's filters and sorts (in the URL).

/** The roles staff can have; customers sign up themselves and are not staff. */
export const STAFF_ROLES = ["owner", "dispatcher", "office", "crew"] as const;
export type StaffRole = (typeof STAFF_ROLES)[number];

export const STAFF_ROLE_NAMES: Record<StaffRole, string> = {
  owner: "Owner",
  dispatcher: "Dispatcher",
  office: "Office",
  crew: "Crew",
};

/** What each role may do, in a few words (shown beside the role choice and on the invitation). */
export const STAFF_ROLE_DUTIES: Record<StaffRole, string> = {
  owner: "everything, including staff, settings and the audit trail",
  dispatcher: "bookings, the calendar, crew-days and runs, prices and doses",
  office: "customers and yards, invoices, payments and records",
  crew: "the day's run on a phone, and the tally at each yard",
};

const role = z.enum(STAFF_ROLES, { error: "Choose a role: owner, dispatcher, office or crew." });

/** A database id posted from a hidden field or a select. */
const id = (message: string) =>
  z
    .string({ error: message })
    .trim()
    .regex(/^[1-9][0-9]{0,15}$/, message)
    .transform(Number)
    .refine(Number.isSafeInteger, message);

/** The "Invite someone" form. The crew applies to the crew role only and may be left empty. */
export const inviteStaffSchema = z
  .object({
    name: z.string({ error: "Enter the person's name." }).trim().min(2, "Enter the person's name.").max(120, "Keep the name under 120 characters."),
    email: z
      .string({ error: "Enter their e-mail address." })
      .trim()
      .toLowerCase()
      .min(1, "Enter their e-mail address.")
      .max(254, "Keep the e-mail address under 254 characters.")
      .email("Enter a valid e-mail address."),
    role,
    crewId: z
      .string()
      .trim()
      .optional()
      .transform((v) => (v ? v : null))
      .pipe(id("Choose a crew from the list.").nullable()),
  })
  .transform((v) => ({ ...v, crewId: v.role === "crew" ? v.crewId : null }));

export type InviteStaffInput = z.output<typeof inviteStaffSchema>;

/** Every action of the staff page, told apart by `intent`. */
export const staffActionSchema = z.discriminatedUnion(
  "intent",
  [
    z.looseObject({ intent: z.literal("invite") }),
    z.object({ intent: z.literal("role"), userId: id("Choose a person."), role }),
    z.object({ intent: z.literal("deactivate"), userId: id("Choose a person.") }),
    z.object({ intent: z.literal("reactivate"), userId: id("Choose a person.") }),
    z.object({ intent: z.literal("resend"), invitationId: id("Choose an invitation.") }),
    z.object({ intent: z.literal("revoke"), invitationId: id("Choose an invitation.") }),
  ],
  { error: "The form was not understood. Reload the page and try again." },
);

export type StaffAction = z.output<typeof staffActionSchema>;

/** The invitee's new password, typed twice. */
export const acceptInvitationSchema = z
  .object({
    password: newPasswordSchema,
    confirm: z.string(),
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ." });

// ---------------------------------------------------------------------------------------
// The staff table's filters and sorts

export const STAFF_STATUSES = ["active", "deactivated", "invited"] as const;
export type StaffStatus = (typeof STAFF_STATUSES)[number];
export const STAFF_STATUS_NAMES: Record<StaffStatus, string> = { active: "Active", deactivated: "Deactivated", invited: "Invited" };

export const STAFF_SORTS = ["name", "email", "role", "status", "lastSeen"] as const;
export type StaffSort = (typeof STAFF_SORTS)[number];

export type StaffQuery = {
  role: StaffRole | "all";
  status: StaffStatus | "all";
  sort: StaffSort;
  dir: "asc" | "desc";
};

export const STAFF_QUERY_DEFAULTS: StaffQuery = { role: "all", status: "all", sort: "name", dir: "asc" };

/** The table's filters from the URL; anything unknown falls back to its default. */
export function readStaffQuery(params: URLSearchParams): StaffQuery {
  const pick = <T extends string>(value: string | null, allowed: readonly T[], fallback: T): T =>
    value !== null && (allowed as readonly string[]).includes(value) ? (value as T) : fallback;
  return {
    role: pick(params.get("role"), ["all", ...STAFF_ROLES], STAFF_QUERY_DEFAULTS.role),
    status: pick(params.get("status"), ["all", ...STAFF_STATUSES], STAFF_QUERY_DEFAULTS.status),
    sort: pick(params.get("sort"), STAFF_SORTS, STAFF_QUERY_DEFAULTS.sort),
    dir: pick(params.get("dir"), ["asc", "desc"], STAFF_QUERY_DEFAULTS.dir),
  };
}

/** How long an invitation link works, in days. */
export const INVITATION_DAYS = 7;
