import { createHash, createHmac, randomBytes, timingSafeEqual } from "node:crypto";
import type { Knex } from "knex";
import { staffInvitationEmail } from "~/emails/staff";
import { STAFF_ROLE_DUTIES, STAFF_ROLE_NAMES, STAFF_ROLES, STAFF_STATUSES, type StaffQuery, type StaffRole, type StaffStatus } from "~/forms/staff";
import { serverEnv } from "~/services/env.server";
import { requestEmailDelivery } from "~/services/jobs.server";
import { mailFrom } from "~/services/mail.server";
import { queueEmail } from "./emails.server";
import { senderName } from "./invoice-documents.server";
import { endUserSessions } from "./sessions.server";
import { businessIdentity, loadBusinessSettings } from "./settings.server";
import type { StaffInvitationRow } from "./tables";
import { hashPassword, normaliseEmail } from "./users.server";

// Staff accounts: the owner invites people by e-mail, changes their role, deactivates and
// reactivates them. An invitation link holds a token of 32 random bytes signed with the
// session secret (so a made-up token is refused before any query); the table keeps only the
// token's SHA-256. A link works once, for INVITATION_DAYS; resending replaces the token.
//
// The business always keeps an active owner: every change to a person's role or state takes
// one transaction-level lock (STAFF_LOCK) before it reads how many owners are active, so two
// owners demoting each other at the same moment are applied one after the other, and the
// second is refused.

import { INVITATION_DAYS } from "~/forms/staff";

export { INVITATION_DAYS };
const DAY_MS = 24 * 60 * 60 * 1000;
const PURPOSE = "varroute:staff-invitation:v1";
const STAFF_LOCK = "varroute:staff-accounts";
/** <32 random bytes>.<HMAC-SHA256 of them>, both base64url without padding. */
const TOKEN = /^([A-Za-z0-9_-]{43})\.([A-Za-z0-9_-]{43})$/;

/** A refused staff change, with the form field its message belongs to and the HTTP status to answer. */
export class StaffChangeRefused extends Error {
  constructor(
    message: string,
    readonly field: string = "form",
    readonly status: 404 | 409 = 409,
  ) {
    super(message);
  }
}

// ---------------------------------------------------------------------------------------
// Tokens

function tokenSignature(secret: string, nonce: string): Buffer {
  return createHmac("sha256", secret).update(`${PURPOSE}:${nonce}`).digest();
}

/** A new invitation token, signed with the first session secret. */
export function newInvitationToken(secret: string = serverEnv().sessionSecrets[0]): string {
  if (!secret) throw new Error("newInvitationToken: no secret to sign with");
  const nonce = randomBytes(32).toString("base64url");
  return `${nonce}.${tokenSignature(secret, nonce).toString("base64url")}`;
}

/**
 * The stored hash of an invitation token, or null when the text is not a token we signed
 * (checked against every session secret, so a rotated secret keeps open links working).
 */
export function invitationTokenHash(token: string | null | undefined, secrets: readonly string[] = serverEnv().sessionSecrets): string | null {
  if (typeof token !== "string") return null;
  const match = TOKEN.exec(token);
  if (!match) return null;
  const given = Buffer.from(match[2], "base64url");
  if (given.length !== 32) return null;
  let valid = false;
  for (const secret of secrets) {
    if (secret && timingSafeEqual(given, tokenSignature(secret, match[1]))) valid = true;
  }
  return valid ? createHash("sha256").update(token).digest("hex") : null;
}

function acceptUrl(token: string): string {
  return `${serverEnv().APP_URL.replace(/\/+$/, "")}/invite/${token}`;
}

// ---------------------------------------------------------------------------------------
// Small readers

async function lockStaff(trx: Knex.Transaction): Promise<void> {
  await trx.raw("select pg_advisory_xact_lock(hashtext(?))", [STAFF_LOCK]);
}

async function businessName(db: Knex): Promise<string> {
  return businessIdentity(await loadBusinessSettings(db), senderName(mailFrom())).name;
}

function audit(
  trx: Knex.Transaction,
  entry: { actorUserId: number; action: string; entityType: "user" | "staff_invitation"; entityId: number; before?: unknown; after?: unknown },
) {
  return trx("audit_log").insert({
    actor_user_id: entry.actorUserId,
    action: entry.action,
    entity_type: entry.entityType,
    entity_id: String(entry.entityId),
    before: entry.before === undefined ? null : JSON.stringify(entry.before),
    after: entry.after === undefined ? null : JSON.stringify(entry.after),
  });
}

function isOpen(invitation: Pick<StaffInvitationRow, "accepted_at" | "revoked_at">): boolean {
  return invitation.accepted_at === null && invitation.revoked_at === null;
}

/** Why an address cannot be invited because it has an account, in the owner's words. */
async function accountHolderMessage(db: Knex, email: string): Promise<string | null> {
  const user = await db("users").where({ email }).first("name", "role", "disabled_at");
  if (!user) return null;
  if (user.role === "customer") return "This address belongs to a customer account. Invite the person with another e-mail address.";
  const state = user.disabled_at ? ", deactivated" : "";
  return `${user.name} already has a staff account with this address (${STAFF_ROLE_NAMES[user.role as StaffRole]}${state}).`;
}

async function crewName(db: Knex, crewId: number | null): Promise<string | null> {
  if (crewId === null) return null;
  const crew = await db("crews").where({ id: crewId }).first("name");
  return crew?.name ?? null;
}

/** Renders and queues the invitation e-mail with `token`'s link; returns the e-mail's id. */
async function queueInvitationEmail(trx: Knex.Transaction, invitation: StaffInvitationRow, token: string, tokenHash: string): Promise<number> {
  const inviter = invitation.invited_by ? await trx("users").where({ id: invitation.invited_by }).first("name") : undefined;
  const role = invitation.role as StaffRole;
  const emailId = await queueEmail(trx, {
    kind: "staff_invitation",
    to: invitation.email,
    ...staffInvitationEmail({
      name: invitation.name,
      invitedByName: inviter?.name?.trim() || "The owner",
      businessName: await businessName(trx),
      roleName: STAFF_ROLE_NAMES[role],
      roleDuties: STAFF_ROLE_DUTIES[role],
      crewName: await crewName(trx, invitation.crew_id === null ? null : Number(invitation.crew_id)),
      acceptUrl: acceptUrl(token),
      validDays: INVITATION_DAYS,
    }),
    // One e-mail per link: a token is sent once, a resend makes a new one.
    dedupeKey: `staff_invitation:${tokenHash}`,
  });
  if (emailId === null) throw new Error("queueInvitationEmail: the invitation's e-mail was queued already");
  return emailId;
}

// ---------------------------------------------------------------------------------------
// Invitations

export type InviteStaffInput = { actorUserId: number; name: string; email: string; role: StaffRole; crewId: number | null };

/**
 * Records an invitation and queues its e-mail in one transaction, then asks for delivery.
 * Refused at the e-mail field when the address has an account or an open invitation, and at
 * the crew field when the crew does not exist or no longer works.
 */
export async function inviteStaff(db: Knex, input: InviteStaffInput, options: { now?: Date } = {}): Promise<{ invitationId: number; emailId: number }> {
  const now = options.now ?? new Date();
  const email = normaliseEmail(input.email);
  if (!(STAFF_ROLES as readonly string[]).includes(input.role)) throw new StaffChangeRefused("Choose a role: owner, dispatcher, office or crew.", "role");
  const crewId = input.role === "crew" ? input.crewId : null;
  const token = newInvitationToken();
  const tokenHash = invitationTokenHash(token)!;

  const result = await db.transaction(async (trx) => {
    // One invitation per address at a time, even when the form is sent twice at once.
    await trx.raw("select pg_advisory_xact_lock(hashtext(?))", [`staff_invitation:${email}`]);
    const taken = await accountHolderMessage(trx, email);
    if (taken) throw new StaffChangeRefused(taken, "email");
    const open = await trx("staff_invitations").where({ email }).whereNull("accepted_at").whereNull("revoked_at").first("id");
    if (open) throw new StaffChangeRefused("An invitation to this address is waiting already. Send it again or withdraw it in the list below.", "email");
    if (crewId !== null) {
      const crew = await trx("crews").where({ id: crewId }).first("active");
      if (!crew || !crew.active) throw new StaffChangeRefused("Choose a crew from the list.", "crewId");
    }
    const [invitation] = await trx("staff_invitations")
      .insert({
        token_hash: tokenHash,
        email,
        name: input.name.trim(),
        role: input.role,
        crew_id: crewId,
        invited_by: input.actorUserId,
        created_at: now,
        expires_at: new Date(now.getTime() + INVITATION_DAYS * DAY_MS),
      })
      .returning("*");
    const emailId = await queueInvitationEmail(trx, invitation, token, tokenHash);
    await audit(trx, {
      actorUserId: input.actorUserId,
      action: "staff.invite",
      entityType: "staff_invitation",
      entityId: Number(invitation.id),
      after: { email, name: invitation.name, role: input.role, crewId, expiresAt: invitation.expires_at.toISOString() },
    });
    return { invitationId: Number(invitation.id), emailId };
  });
  if (!db.isTransaction) await requestEmailDelivery([result.emailId]);
  return result;
}

/** Locks an open invitation for a change; refused when there is none, or it was accepted or withdrawn. */
async function lockOpenInvitation(trx: Knex.Transaction, invitationId: number): Promise<StaffInvitationRow> {
  const invitation = await trx("staff_invitations").where({ id: invitationId }).forUpdate().first();
  if (!invitation) throw new StaffChangeRefused("There is no such invitation.", "form", 404);
  if (invitation.accepted_at) throw new StaffChangeRefused(`${invitation.name} has accepted the invitation already.`);
  if (invitation.revoked_at) throw new StaffChangeRefused("This invitation was withdrawn.");
  return invitation;
}

/**
 * Sends an open invitation again with a new link (the old link stops working) that is good
 * for INVITATION_DAYS from now.
 */
export async function resendInvitation(db: Knex, input: { actorUserId: number; invitationId: number }, options: { now?: Date } = {}): Promise<{ emailId: number }> {
  const now = options.now ?? new Date();
  const token = newInvitationToken();
  const tokenHash = invitationTokenHash(token)!;
  const result = await db.transaction(async (trx) => {
    const invitation = await lockOpenInvitation(trx, input.invitationId);
    const taken = await accountHolderMessage(trx, invitation.email);
    if (taken) throw new StaffChangeRefused(taken);
    const expiresAt = new Date(now.getTime() + INVITATION_DAYS * DAY_MS);
    const [updated] = await trx("staff_invitations").where({ id: invitation.id }).update({ token_hash: tokenHash, expires_at: expiresAt }).returning("*");
    const emailId = await queueInvitationEmail(trx, updated, token, tokenHash);
    await audit(trx, {
      actorUserId: input.actorUserId,
      action: "staff.invite_resent",
      entityType: "staff_invitation",
      entityId: Number(invitation.id),
      before: { expiresAt: invitation.expires_at.toISOString() },
      after: { email: invitation.email, expiresAt: expiresAt.toISOString() },
    });
    return { emailId };
  });
  if (!db.isTransaction) await requestEmailDelivery([result.emailId]);
  return result;
}

/** Withdraws an open invitation: its link stops working at once. */
export async function revokeInvitation(db: Knex, input: { actorUserId: number; invitationId: number }, options: { now?: Date } = {}): Promise<void> {
  const now = options.now ?? new Date();
  await db.transaction(async (trx) => {
    const invitation = await lockOpenInvitation(trx, input.invitationId);
    await trx("staff_invitations").where({ id: invitation.id }).update({ revoked_at: now });
    await audit(trx, {
      actorUserId: input.actorUserId,
      action: "staff.invite_revoked",
      entityType: "staff_invitation",
      entityId: Number(invitation.id),
      after: { email: invitation.email, name: invitation.name, role: invitation.role },
    });
  });
}

/** What the invitation page shows: who invited whom to which business, for which role. */
export type InvitationView = {
  name: string;
  email: string;
  role: StaffRole;
  crewName: string | null;
  invitedByName: string;
  businessName: string;
  /** ISO instant. */
  expiresAt: string;
};

/** The open, unexpired invitation a link's token names, or null (unknown, expired, used or withdrawn). */
export async function invitationForToken(db: Knex, token: string, options: { now?: Date } = {}): Promise<InvitationView | null> {
  const now = options.now ?? new Date();
  const tokenHash = invitationTokenHash(token);
  if (!tokenHash) return null;
  const invitation = await db("staff_invitations").where({ token_hash: tokenHash }).first();
  if (!invitation || !isOpen(invitation) || invitation.expires_at.getTime() <= now.getTime()) return null;
  const inviter = invitation.invited_by ? await db("users").where({ id: invitation.invited_by }).first("name") : undefined;
  return {
    name: invitation.name,
    email: invitation.email,
    role: invitation.role as StaffRole,
    crewName: await crewName(db, invitation.crew_id === null ? null : Number(invitation.crew_id)),
    invitedByName: inviter?.name?.trim() || "The owner",
    businessName: await businessName(db),
    expiresAt: invitation.expires_at.toISOString(),
  };
}

export type InvitationAcceptance =
  | { outcome: "created"; userId: string; role: StaffRole }
  /** Unknown, expired, used or withdrawn. */
  | { outcome: "invalid" }
  /** The address got an account after the invitation was sent. */
  | { outcome: "account-exists" };

function isTakenEmail(error: unknown): boolean {
  const pg = error as { code?: unknown; constraint?: unknown } | null;
  return typeof pg === "object" && pg !== null && pg.code === "23505" && pg.constraint === "users_email_unique";
}

/**
 * Follows an invitation with the new password (checked by the caller): makes the user (and
 * the crew membership chosen at invitation), marks the invitation accepted and writes the
 * audit entry, in one transaction. The invitation row is locked, so the same link sent twice
 * at once makes one account.
 */
export async function acceptInvitation(db: Knex, token: string, input: { password: string }, options: { now?: Date } = {}): Promise<InvitationAcceptance> {
  const now = options.now ?? new Date();
  const tokenHash = invitationTokenHash(token);
  if (!tokenHash) return { outcome: "invalid" };
  const passwordHash = await hashPassword(input.password);
  try {
    return await db.transaction(async (trx): Promise<InvitationAcceptance> => {
      const invitation = await trx("staff_invitations").where({ token_hash: tokenHash }).forUpdate().first();
      if (!invitation || !isOpen(invitation) || invitation.expires_at.getTime() <= now.getTime()) return { outcome: "invalid" };
      if (await trx("users").where({ email: invitation.email }).first("id")) return { outcome: "account-exists" };
      const [user] = await trx("users")
        .insert({ email: invitation.email, password_hash: passwordHash, role: invitation.role, name: invitation.name })
        .returning("id");
      const userId = Number(user.id);
      const crewId = invitation.role === "crew" && invitation.crew_id !== null ? Number(invitation.crew_id) : null;
      if (crewId !== null) await trx("crew_members").insert({ crew_id: crewId, user_id: userId }).onConflict(["crew_id", "user_id"]).ignore();
      await trx("staff_invitations").where({ id: invitation.id }).update({ accepted_at: now });
      await audit(trx, {
        actorUserId: userId,
        action: "staff.invite_accepted",
        entityType: "user",
        entityId: userId,
        after: { invitationId: Number(invitation.id), email: invitation.email, name: invitation.name, role: invitation.role, crewId },
      });
      return { outcome: "created", userId: String(userId), role: invitation.role as StaffRole };
    });
  } catch (error) {
    if (isTakenEmail(error)) return { outcome: "account-exists" };
    throw error;
  }
}

// ---------------------------------------------------------------------------------------
// Role and state of a member of staff

type LockedMember = { id: number; name: string; email: string; role: StaffRole; disabled_at: Date | null };

/** Takes the staff lock, then the member's row; refused (404) when the user is not staff. */
async function lockMember(trx: Knex.Transaction, userId: number): Promise<LockedMember> {
  await lockStaff(trx);
  const user = await trx("users").where({ id: userId }).forUpdate().first("id", "name", "email", "role", "disabled_at");
  if (!user || user.role === "customer") throw new StaffChangeRefused("There is no such member of staff.", "form", 404);
  return { ...user, id: Number(user.id), role: user.role as StaffRole };
}

/** Active owners other than `userId`; read under the staff lock. */
async function otherActiveOwners(trx: Knex.Transaction, userId: number): Promise<number> {
  const row = await trx("users").where({ role: "owner" }).whereNull("disabled_at").whereNot({ id: userId }).count<{ n: number }[]>("* as n").first();
  return Number(row?.n ?? 0);
}

async function refuseLastOwner(trx: Knex.Transaction, member: LockedMember, message: string, field: string): Promise<void> {
  if (member.role === "owner" && member.disabled_at === null && (await otherActiveOwners(trx, member.id)) === 0) {
    throw new StaffChangeRefused(message, field);
  }
}

/**
 * Gives a member of staff another staff role. The last active owner keeps the role (also
 * when changing their own). A crew member who takes another role leaves their crews.
 */
export async function changeStaffRole(db: Knex, input: { actorUserId: number; userId: number; role: StaffRole }): Promise<{ changed: boolean }> {
  if (!(STAFF_ROLES as readonly string[]).includes(input.role)) throw new StaffChangeRefused("Choose a role: owner, dispatcher, office or crew.", "role");
  return db.transaction(async (trx) => {
    const member = await lockMember(trx, input.userId);
    if (member.role === input.role) return { changed: false };
    await refuseLastOwner(trx, member, `${member.name} is the only active owner. Make someone else owner first, so the business keeps one.`, "role");
    await trx("users").where({ id: member.id }).update({ role: input.role, updated_at: trx.fn.now() as unknown as Date });
    const leftCrews = member.role === "crew" ? await trx("crew_members").where({ user_id: member.id }).delete() : 0;
    await audit(trx, {
      actorUserId: input.actorUserId,
      action: "staff.role",
      entityType: "user",
      entityId: member.id,
      before: { name: member.name, role: member.role },
      after: { name: member.name, role: input.role, ...(leftCrews > 0 ? { crewsLeft: leftCrews } : {}) },
    });
    return { changed: true };
  });
}

/**
 * Deactivates a member of staff: they cannot sign in, and every session they have ends in
 * the same transaction. Not the last active owner, and not the person doing it.
 */
export async function deactivateStaff(db: Knex, input: { actorUserId: number; userId: number }, options: { now?: Date } = {}): Promise<{ changed: boolean; sessionsEnded: number }> {
  const now = options.now ?? new Date();
  if (input.actorUserId === input.userId) throw new StaffChangeRefused("You cannot deactivate your own account. Ask another owner to do it.");
  return db.transaction(async (trx) => {
    const member = await lockMember(trx, input.userId);
    if (member.disabled_at !== null) return { changed: false, sessionsEnded: 0 };
    await refuseLastOwner(trx, member, `${member.name} is the only active owner and cannot be deactivated. Make someone else owner first.`, "form");
    await trx("users").where({ id: member.id }).update({ disabled_at: now, updated_at: trx.fn.now() as unknown as Date });
    const sessionsEnded = await endUserSessions(trx, member.id);
    await audit(trx, {
      actorUserId: input.actorUserId,
      action: "staff.deactivate",
      entityType: "user",
      entityId: member.id,
      before: { name: member.name, role: member.role, active: true },
      after: { name: member.name, role: member.role, active: false, sessionsEnded },
    });
    return { changed: true, sessionsEnded };
  });
}

/** Lets a deactivated member of staff sign in again (with their old password). */
export async function reactivateStaff(db: Knex, input: { actorUserId: number; userId: number }): Promise<{ changed: boolean }> {
  return db.transaction(async (trx) => {
    const member = await lockMember(trx, input.userId);
    if (member.disabled_at === null) return { changed: false };
    await trx("users").where({ id: member.id }).update({ disabled_at: null, updated_at: trx.fn.now() as unknown as Date });
    await audit(trx, {
      actorUserId: input.actorUserId,
      action: "staff.reactivate",
      entityType: "user",
      entityId: member.id,
      before: { name: member.name, role: member.role, active: false },
      after: { name: member.name, role: member.role, active: true },
    });
    return { changed: true };
  });
}

// ---------------------------------------------------------------------------------------
// The staff page's list

export type StaffListRow = {
  /** "user:<id>" or "invitation:<id>": unique across both kinds. */
  key: string;
  kind: "member" | "invitation";
  /** The user's id for a member, the invitation's id for an invitation. */
  id: number;
  name: string;
  email: string;
  role: StaffRole;
  crewName: string | null;
  status: StaffStatus;
  /** ISO instant of the member's latest session activity (null: none on record). */
  lastSeenAt: string | null;
  /** Invitations: when the link stops working, and whether it has. */
  expiresAt: string | null;
  expired: boolean;
  invitedByName: string | null;
};

const byText = (a: string, b: string) => a.localeCompare(b, "en", { sensitivity: "base" });

function compareRows(sort: StaffQuery["sort"], a: StaffListRow, b: StaffListRow): number {
  switch (sort) {
    case "name":
      return byText(a.name, b.name);
    case "email":
      return byText(a.email, b.email);
    case "role":
      return STAFF_ROLES.indexOf(a.role) - STAFF_ROLES.indexOf(b.role);
    case "status":
      return STAFF_STATUSES.indexOf(a.status) - STAFF_STATUSES.indexOf(b.status);
    case "lastSeen":
      return (a.lastSeenAt ?? "").localeCompare(b.lastSeenAt ?? "");
  }
}

/** Filters and sorts the rows (ties by name); rows never seen go last whichever way. */
export function arrangeStaffRows(rows: readonly StaffListRow[], query: StaffQuery): StaffListRow[] {
  const sign = query.dir === "asc" ? 1 : -1;
  return rows
    .filter((row) => (query.role === "all" || row.role === query.role) && (query.status === "all" || row.status === query.status))
    .sort((a, b) => {
      if (query.sort === "lastSeen" && (a.lastSeenAt === null) !== (b.lastSeenAt === null)) return a.lastSeenAt === null ? 1 : -1;
      return sign * compareRows(query.sort, a, b) || byText(a.name, b.name) || a.key.localeCompare(b.key);
    });
}

/** Every member of staff and every open invitation, filtered and sorted as the query says. */
export async function listStaff(db: Knex, query: StaffQuery, options: { now?: Date } = {}): Promise<{ rows: StaffListRow[]; total: number }> {
  const now = options.now ?? new Date();
  const members = await db("users")
    .whereNot("users.role", "customer")
    .select<{ id: number; name: string; email: string; role: StaffRole; disabled_at: Date | null; last_seen_at: Date | null; crew_names: string | null }[]>(
      "users.id",
      "users.name",
      "users.email",
      "users.role",
      "users.disabled_at",
      db.raw("(select max(sessions.last_seen_at) from sessions where sessions.user_id = users.id) as last_seen_at"),
      db.raw(
        "(select string_agg(crews.name, ', ' order by crews.name) from crew_members join crews on crews.id = crew_members.crew_id where crew_members.user_id = users.id) as crew_names",
      ),
    );
  const invitations = await db("staff_invitations")
    .leftJoin("crews", "crews.id", "staff_invitations.crew_id")
    .leftJoin("users as inviter", "inviter.id", "staff_invitations.invited_by")
    .whereNull("staff_invitations.accepted_at")
    .whereNull("staff_invitations.revoked_at")
    .select<{ id: number; name: string; email: string; role: StaffRole; expires_at: Date; crew_name: string | null; invited_by_name: string | null }[]>(
      "staff_invitations.id",
      "staff_invitations.name",
      "staff_invitations.email",
      "staff_invitations.role",
      "staff_invitations.expires_at",
      "crews.name as crew_name",
      "inviter.name as invited_by_name",
    );
  const rows: StaffListRow[] = [
    ...members.map(
      (m): StaffListRow => ({
        key: `user:${m.id}`,
        kind: "member",
        id: Number(m.id),
        name: m.name,
        email: m.email,
        role: m.role,
        crewName: m.crew_names,
        status: m.disabled_at ? "deactivated" : "active",
        lastSeenAt: m.last_seen_at ? new Date(m.last_seen_at).toISOString() : null,
        expiresAt: null,
        expired: false,
        invitedByName: null,
      }),
    ),
    ...invitations.map(
      (i): StaffListRow => ({
        key: `invitation:${i.id}`,
        kind: "invitation",
        id: Number(i.id),
        name: i.name,
        email: i.email,
        role: i.role,
        crewName: i.crew_name,
        status: "invited",
        lastSeenAt: null,
        expiresAt: i.expires_at.toISOString(),
        expired: i.expires_at.getTime() <= now.getTime(),
        invitedByName: i.invited_by_name,
      }),
    ),
  ];
  return { rows: arrangeStaffRows(rows, query), total: rows.length };
}

/** The crews a new crew member can join. */
export async function crewChoices(db: Knex): Promise<{ id: number; name: string }[]> {
  const crews = await db("crews").where({ active: true }).orderBy("name").select("id", "name");
  return crews.map((c) => ({ id: Number(c.id), name: c.name }));
}
