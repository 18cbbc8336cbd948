import type { Knex } from "knex";
import { emailChangeConfirmEmail, emailChangeNoticeEmail, passwordChangedEmail } from "~/emails/account";
import { requestEmailDelivery } from "~/services/jobs.server";
import { queueEmail } from "./emails.server";
import { appUrl, audienceOf, KEEP_EXPIRED_DAYS, linkTokenHash, newLinkToken } from "./password-resets.server";
import { endUserSessions } from "./sessions.server";
import type { Role } from "./tables";
import { hashPassword, normaliseEmail } from "./users.server";

// A signed-in person's own account, whatever their role: name and phone, password, and
// e-mail address. The routes check the current password (within the sign-in limits) before
// a password or address change; these functions make the change, its audit entry and its
// e-mails in one transaction. A new address becomes the account's only through a link
// e-mailed to it (email_changes keeps the link's SHA-256), so nobody moves an account to an
// address they cannot read; the old address gets a notice when the link is sent.

/** How long a link to confirm a new address works. */
export const EMAIL_CHANGE_LINK_HOURS = 24;
/** Links to new addresses one account may ask for in an hour: each e-mails an address the person typed. */
const EMAIL_CHANGE_LINKS_PER_HOUR = 3;
const HOUR_MS = 60 * 60 * 1000;

export type Profile = {
  name: string;
  email: string;
  phone: string | null;
  role: Role;
  /** The address waiting for its link to be followed, if any. */
  pendingEmail: string | null;
};

export async function loadProfile(db: Knex, userId: string, now = new Date()): Promise<Profile | null> {
  const user = await db("users").where({ id: Number(userId) }).whereNull("disabled_at").first("name", "email", "phone", "role");
  if (!user) return null;
  const pending = await db("email_changes")
    .where({ user_id: Number(userId) })
    .whereNull("used_at")
    .where("expires_at", ">", now)
    .orderBy("created_at", "desc")
    .first("new_email");
  return { name: user.name, email: user.email, phone: user.phone, role: user.role, pendingEmail: pending?.new_email ?? null };
}

async function customerIdOf(trx: Knex, userId: number): Promise<number | null> {
  const customer = await trx("customers").where({ user_id: userId }).first("id");
  return customer?.id ?? null;
}

// ---------------------------------------------------------------------------------------
// Name and phone

/**
 * Saves the person's name and phone, and for a customer the same on their customer record
 * (the office's lists and the crew's call sheet read it). An audit entry when something
 * changed. Returns whether anything did.
 */
export async function updateProfileDetails(db: Knex, input: { userId: string; name: string; phone: string | null }): Promise<boolean> {
  const userId = Number(input.userId);
  return db.transaction(async (trx) => {
    const before = await trx("users").where({ id: userId }).forUpdate().first("name", "phone");
    if (!before) throw new Error(`updateProfileDetails: no user ${userId}`);
    if (before.name === input.name && before.phone === input.phone) return false;
    await trx("users")
      .where({ id: userId })
      .update({ name: input.name, phone: input.phone, updated_at: trx.fn.now() as unknown as Date });
    await trx("customers")
      .where({ user_id: userId })
      .whereNull("anonymised_at")
      .update({ name: input.name, phone: input.phone, updated_at: trx.fn.now() as unknown as Date });
    await trx("audit_log").insert({
      actor_user_id: userId,
      action: "user.profile",
      entity_type: "user",
      entity_id: String(userId),
      before: JSON.stringify({ name: before.name, phone: before.phone }),
      after: JSON.stringify({ name: input.name, phone: input.phone }),
    });
    return true;
  });
}

// ---------------------------------------------------------------------------------------
// Password

/**
 * Sets a new password (the current one checked already): every OTHER session of the user
 * ends, open reset links are used up, an audit entry and a notice e-mail. `keepSessionToken`
 * is the token of the session making the change. Returns how many sessions ended.
 */
export async function changePassword(db: Knex, input: { userId: string; password: string; keepSessionToken: string | null }): Promise<number> {
  const userId = Number(input.userId);
  const passwordHash = await hashPassword(input.password);
  const { ended, emailId } = await db.transaction(async (trx) => {
    const user = await trx("users").where({ id: userId }).whereNull("disabled_at").forUpdate().first("email", "name", "role");
    if (!user) throw new Error(`changePassword: no active user ${userId}`);
    await trx("users")
      .where({ id: userId })
      .update({ password_hash: passwordHash, updated_at: trx.fn.now() as unknown as Date });
    await trx("password_resets").where({ user_id: userId }).whereNull("used_at").update({ used_at: trx.fn.now() as unknown as Date });
    const ended = await endUserSessions(trx, userId, { exceptToken: input.keepSessionToken });
    const [audit] = await trx("audit_log")
      .insert({
        actor_user_id: userId,
        action: "user.password_change",
        entity_type: "user",
        entity_id: String(userId),
        after: JSON.stringify({ otherSessionsEnded: ended }),
      })
      .returning("id");
    const emailId = await queueEmail(trx, {
      kind: "password_changed",
      to: user.email,
      ...passwordChangedEmail({ name: user.name, how: "change", forgotUrl: `${appUrl()}/forgot-password`, audience: audienceOf(user.role) }),
      customerId: await customerIdOf(trx, userId),
      dedupeKey: `password_changed:change:${audit.id}`,
    });
    return { ended, emailId };
  });
  if (emailId !== null && !db.isTransaction) await requestEmailDelivery([emailId]);
  return ended;
}

// ---------------------------------------------------------------------------------------
// E-mail address

export type EmailChangeRequest =
  | { outcome: "sent" }
  /** The new address is the account's own already. */
  | { outcome: "same" }
  /** Another account signs in with the new address. */
  | { outcome: "taken" }
  /** The account asked for its share of links this hour. */
  | { outcome: "too-many" };

/**
 * Starts a change of address (the current password checked already): a single-use link to
 * the NEW address, a notice to the OLD one. Only the newest link of an account works: earlier
 * open ones are used up.
 */
export async function requestEmailChange(
  db: Knex,
  input: { userId: string; newEmail: string; requestedFrom: string; now?: Date },
): Promise<EmailChangeRequest> {
  const now = input.now ?? new Date();
  const userId = Number(input.userId);
  const newEmail = normaliseEmail(input.newEmail);
  const token = newLinkToken();
  const result = await db.transaction(async (trx): Promise<{ answer: EmailChangeRequest; emailIds: number[] }> => {
    // One request per account at a time, so the hourly count holds under parallel posts.
    const user = await trx("users").where({ id: userId }).whereNull("disabled_at").forUpdate().first("email", "name", "role");
    if (!user) throw new Error(`requestEmailChange: no active user ${userId}`);
    if (user.email === newEmail) return { answer: { outcome: "same" }, emailIds: [] };
    if (await trx("users").where({ email: newEmail }).first("id")) return { answer: { outcome: "taken" }, emailIds: [] };
    const recent = await trx("email_changes")
      .where({ user_id: userId })
      .where("created_at", ">", new Date(now.getTime() - HOUR_MS))
      .count<{ n: number }[]>("* as n")
      .first();
    if (Number(recent?.n ?? 0) >= EMAIL_CHANGE_LINKS_PER_HOUR) return { answer: { outcome: "too-many" }, emailIds: [] };

    await trx("email_changes")
      .where("expires_at", "<", new Date(now.getTime() - KEEP_EXPIRED_DAYS * 24 * HOUR_MS))
      .delete();
    await trx("email_changes").where({ user_id: userId }).whereNull("used_at").update({ used_at: now });
    const [change] = await trx("email_changes")
      .insert({
        token_hash: linkTokenHash(token)!,
        user_id: userId,
        new_email: newEmail,
        created_at: now,
        expires_at: new Date(now.getTime() + EMAIL_CHANGE_LINK_HOURS * HOUR_MS),
        requested_from: input.requestedFrom,
      })
      .returning("id");
    const customerId = await customerIdOf(trx, userId);
    const audience = audienceOf(user.role);
    const confirmId = await queueEmail(trx, {
      kind: "email_change_confirm",
      to: newEmail,
      ...emailChangeConfirmEmail({ name: user.name, newEmail, confirmUrl: `${appUrl()}/profile/email/${token}`, validHours: EMAIL_CHANGE_LINK_HOURS, audience }),
      customerId,
      dedupeKey: `email_change_confirm:${change.id}`,
    });
    const noticeId = await queueEmail(trx, {
      kind: "email_change_notice",
      to: user.email,
      ...emailChangeNoticeEmail({ name: user.name, newEmail, forgotUrl: `${appUrl()}/forgot-password`, audience }),
      customerId,
      dedupeKey: `email_change_notice:${change.id}`,
    });
    return { answer: { outcome: "sent" }, emailIds: [confirmId, noticeId].filter((id): id is number => id !== null) };
  });
  if (result.emailIds.length > 0 && !db.isTransaction) await requestEmailDelivery(result.emailIds);
  return result.answer;
}

export type EmailChangeConfirmation =
  | { outcome: "changed"; userId: string; oldEmail: string; newEmail: string }
  /** Unknown, expired, used or replaced by a newer link, or the account is disabled. */
  | { outcome: "invalid" }
  /** Another account took the address after the link was sent. */
  | { outcome: "taken" };

function isTakenEmail(error: unknown): boolean {
  const pg = error as { code?: unknown; constraint?: unknown } | null;
  return typeof pg === "object" && pg !== null && pg.code === "23505" && pg.constraint === "users_email_unique";
}

/**
 * Follows the link to a new address: it becomes the account's e-mail (and a customer's
 * customer record's), the account's open links are used up (reset links went to the old
 * address), and an audit entry records before and after. Works once.
 */
export async function confirmEmailChange(db: Knex, token: string, options: { now?: Date } = {}): Promise<EmailChangeConfirmation> {
  const now = options.now ?? new Date();
  const tokenHash = linkTokenHash(token);
  if (!tokenHash) return { outcome: "invalid" };
  try {
    return await db.transaction(async (trx): Promise<EmailChangeConfirmation> => {
      const change = await trx("email_changes").where({ token_hash: tokenHash }).forUpdate().first();
      if (!change || change.used_at !== null || change.expires_at.getTime() <= now.getTime()) return { outcome: "invalid" };
      const user = await trx("users").where({ id: change.user_id }).whereNull("disabled_at").forUpdate().first("id", "email");
      if (!user) return { outcome: "invalid" };
      if (await trx("users").where({ email: change.new_email }).whereNot({ id: user.id }).first("id")) return { outcome: "taken" };

      await trx("users")
        .where({ id: user.id })
        .update({ email: change.new_email, updated_at: trx.fn.now() as unknown as Date });
      await trx("customers")
        .where({ user_id: user.id })
        .whereNull("anonymised_at")
        .update({ email: change.new_email, updated_at: trx.fn.now() as unknown as Date });
      await trx("email_changes").where({ user_id: user.id }).whereNull("used_at").update({ used_at: now });
      await trx("password_resets").where({ user_id: user.id }).whereNull("used_at").update({ used_at: now });
      await trx("audit_log").insert({
        actor_user_id: user.id,
        action: "user.email_change",
        entity_type: "user",
        entity_id: String(user.id),
        before: JSON.stringify({ email: user.email }),
        after: JSON.stringify({ email: change.new_email }),
      });
      return { outcome: "changed", userId: String(user.id), oldEmail: user.email, newEmail: change.new_email };
    });
  } catch (error) {
    // Two accounts confirming the same new address at once: the second meets the first.
    if (isTakenEmail(error)) return { outcome: "taken" };
    throw error;
  }
}
