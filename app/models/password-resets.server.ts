import { createHash, randomBytes } from "node:crypto";
import type { Knex } from "knex";
import { RateLimiterPostgres, RateLimiterRes } from "rate-limiter-flexible";
import { passwordChangedEmail, passwordResetEmail, type AccountAudience } from "~/emails/account";
import { serverEnv } from "~/services/env.server";
import { requestEmailDelivery } from "~/services/jobs.server";
import { networkOf } from "~/services/sign-in-limits.server";
import { queueEmail } from "./emails.server";
import { endUserSessions } from "./sessions.server";
import type { Role } from "./tables";
import { hashPassword, normaliseEmail } from "./users.server";

// "Forgot your password?": the form answers every address alike, and only an active
// account's own inbox gets a link. The link holds 32 random bytes; password_resets keeps
// their SHA-256. A link works once and for an hour; following it and choosing a password
// uses every open link of the account, ends every session, and e-mails a notice.
// Limits (rate-limiter-flexible, table password_reset_limits): at most 3 requests per
// address an hour, known address or not (the rest are answered alike and send nothing),
// and at most 10 per client network an hour (the rest are refused with a wait).

/** How long a reset link works. */
import { RESET_LINK_MINUTES } from "~/forms/profile";

export { RESET_LINK_MINUTES };
/** Requests per e-mail address an hour that may send a link. */
const LINKS_PER_EMAIL_PER_HOUR = 3;
/** Requests per client network (IPv4 address, IPv6 /64) an hour, over every address. */
const REQUESTS_PER_NETWORK_PER_HOUR = 10;
/** Links and e-mail changes are deleted this long after they expire (swept on each new request). */
export const KEEP_EXPIRED_DAYS = 7;
const HOUR_MS = 60 * 60 * 1000;
const DAY_MS = 24 * HOUR_MS;
/** 32 random bytes, base64url without padding. */
const TOKEN = /^[A-Za-z0-9_-]{43}$/;

/** A new token for an e-mailed link (reset, e-mail change). */
export function newLinkToken(): string {
  return randomBytes(32).toString("base64url");
}

/** The stored hash of a link's token, or null when the text is not a token we make. */
export function linkTokenHash(token: string | null | undefined): string | null {
  if (typeof token !== "string" || !TOKEN.test(token)) return null;
  return createHash("sha256").update(token).digest("hex");
}

/** The app's address for links in e-mails, without a trailing slash. */
export function appUrl(): string {
  return serverEnv().APP_URL.replace(/\/+$/, "");
}

/** Customers read the customer wording of the e-mails' cautions; everyone else the crew's. */
export function audienceOf(role: Role): AccountAudience {
  return role === "customer" ? "customer" : "staff";
}

// ---------------------------------------------------------------------------------------
// Limits

type ResetLimiters = { perEmail: RateLimiterPostgres; perNetwork: RateLimiterPostgres };
const limiterCache = new WeakMap<Knex, ResetLimiters>();

function resetLimiters(db: Knex): ResetLimiters {
  let limiters = limiterCache.get(db);
  if (!limiters) {
    // The table comes from the migration; one of the two sweeps expired rows of both.
    const store = { storeClient: db, storeType: "knex", tableName: "password_reset_limits", tableCreated: true };
    limiters = {
      perEmail: new RateLimiterPostgres({ ...store, keyPrefix: "email", points: LINKS_PER_EMAIL_PER_HOUR, duration: 3600, clearExpiredByTimeout: true }),
      perNetwork: new RateLimiterPostgres({ ...store, keyPrefix: "network", points: REQUESTS_PER_NETWORK_PER_HOUR, duration: 3600 }),
    };
    limiterCache.set(db, limiters);
  }
  return limiters;
}

/** Keys are hashes: the table holds no e-mail or IP address in clear. */
function digest(text: string): string {
  return createHash("sha256").update(text).digest("hex").slice(0, 32);
}

async function take(limiter: RateLimiterPostgres, key: string): Promise<{ taken: true } | { taken: false; waitMs: number }> {
  try {
    await limiter.consume(key);
    return { taken: true };
  } catch (refusal) {
    if (refusal instanceof RateLimiterRes) return { taken: false, waitMs: refusal.msBeforeNext };
    throw refusal;
  }
}

// ---------------------------------------------------------------------------------------
// Asking for a link

export type PasswordResetRequest =
  /** The answer every address gets; emailId is the link's e-mail when one was queued (for tests and logs, never for the page). */
  | { outcome: "answered"; emailId: number | null }
  /** The client's network asked too often; nothing was looked up. */
  | { outcome: "network-limit"; waitMs: number };

/**
 * Queues a reset link for the active account that uses `email`, within the limits. Unknown,
 * disabled and limited addresses go through the same steps (limits, token, transaction) and
 * queue nothing, so neither the answer nor its time tells them apart.
 */
export async function requestPasswordReset(
  db: Knex,
  input: { email: string; requestedFrom: string; now?: Date },
): Promise<PasswordResetRequest> {
  const now = input.now ?? new Date();
  const email = normaliseEmail(input.email);
  const { perEmail, perNetwork } = resetLimiters(db);
  const network = await take(perNetwork, digest(networkOf(input.requestedFrom)));
  if (!network.taken) return { outcome: "network-limit", waitMs: network.waitMs };
  const emailTurn = await take(perEmail, digest(email));

  const token = newLinkToken();
  const tokenHash = linkTokenHash(token)!;
  const emailId = await db.transaction(async (trx) => {
    await trx("password_resets")
      .where("expires_at", "<", new Date(now.getTime() - KEEP_EXPIRED_DAYS * DAY_MS))
      .delete();
    // One query for the account and its customer record, so a known address costs few more round trips than an unknown one.
    const user = await trx("users")
      .leftJoin("customers", "customers.user_id", "users.id")
      .where("users.email", email)
      .whereNull("users.disabled_at")
      .first<{ id: number; name: string; role: Role; customer_id: number | null } | undefined>("users.id", "users.name", "users.role", "customers.id as customer_id");
    if (!user || !emailTurn.taken) return null;
    const [reset] = await trx("password_resets")
      .insert({
        token_hash: tokenHash,
        user_id: user.id,
        created_at: now,
        expires_at: new Date(now.getTime() + RESET_LINK_MINUTES * 60_000),
        requested_from: input.requestedFrom,
      })
      .returning("id");
    return queueEmail(trx, {
      kind: "password_reset",
      to: email,
      ...passwordResetEmail({ name: user.name, resetUrl: `${appUrl()}/reset-password/${token}`, validMinutes: RESET_LINK_MINUTES, audience: audienceOf(user.role) }),
      customerId: user.customer_id,
      dedupeKey: `password_reset:${reset.id}`,
    });
  });
  // Not awaited: putting the job on the queue takes a moment that an unknown address would
  // not spend. It never throws, and the worker's sweep sends the e-mail if the job is lost.
  if (emailId !== null && !db.isTransaction) void requestEmailDelivery([emailId]);
  return { outcome: "answered", emailId };
}

// ---------------------------------------------------------------------------------------
// Following the link

export type ResetLinkHolder = { userId: string; email: string; name: string };

/** The account a reset link is for, while the link still works (unused, not expired, account active); else null. */
export async function findPasswordReset(db: Knex, token: string, now = new Date()): Promise<ResetLinkHolder | null> {
  const tokenHash = linkTokenHash(token);
  if (!tokenHash) return null;
  const row = await db("password_resets")
    .join("users", "users.id", "password_resets.user_id")
    .where("password_resets.token_hash", tokenHash)
    .whereNull("password_resets.used_at")
    .where("password_resets.expires_at", ">", now)
    .whereNull("users.disabled_at")
    .first("users.id", "users.email", "users.name");
  return row ? { userId: String(row.id), email: row.email, name: row.name } : null;
}

export type PasswordResetResult = { outcome: "reset"; userId: string; email: string; role: Role } | { outcome: "invalid" };

/**
 * Sets the account's new password from a reset link, in one transaction: the password, every
 * open reset link and pending e-mail change of the account used up, every session ended, an
 * audit entry and the "your password was changed" notice. The caller has checked the
 * password against the rules. A link works once, also when followed twice at once.
 */
export async function resetPassword(db: Knex, input: { token: string; password: string; now?: Date }): Promise<PasswordResetResult> {
  const now = input.now ?? new Date();
  const tokenHash = linkTokenHash(input.token);
  if (!tokenHash) return { outcome: "invalid" };
  const passwordHash = await hashPassword(input.password);
  const result = await db.transaction(async (trx): Promise<PasswordResetResult & { emailId?: number | null }> => {
    const reset = await trx("password_resets").where({ token_hash: tokenHash }).forUpdate().first();
    if (!reset || reset.used_at !== null || reset.expires_at.getTime() <= now.getTime()) return { outcome: "invalid" };
    const user = await trx("users").where({ id: reset.user_id }).whereNull("disabled_at").first("id", "email", "name", "role");
    if (!user) return { outcome: "invalid" };

    await trx("users")
      .where({ id: user.id })
      .update({ password_hash: passwordHash, updated_at: trx.fn.now() as unknown as Date });
    await trx("password_resets").where({ user_id: user.id }).whereNull("used_at").update({ used_at: now });
    // A change of address someone else may have started with the old password goes too.
    await trx("email_changes").where({ user_id: user.id }).whereNull("used_at").update({ used_at: now });
    await endUserSessions(trx, user.id);
    await trx("audit_log").insert({
      actor_user_id: user.id,
      action: "user.password_reset",
      entity_type: "user",
      entity_id: String(user.id),
      after: JSON.stringify({ linkSentAt: reset.created_at.toISOString() }),
    });
    const customer = await trx("customers").where({ user_id: user.id }).first("id");
    const emailId = await queueEmail(trx, {
      kind: "password_changed",
      to: user.email,
      ...passwordChangedEmail({ name: user.name, how: "reset", forgotUrl: `${appUrl()}/forgot-password`, audience: audienceOf(user.role) }),
      customerId: customer?.id ?? null,
      dedupeKey: `password_changed:reset:${reset.id}`,
    });
    return { outcome: "reset", userId: String(user.id), email: user.email, role: user.role, emailId };
  });
  if (result.outcome === "invalid") return result;
  const { emailId, ...reset } = result;
  if (emailId != null && !db.isTransaction) await requestEmailDelivery([emailId]);
  return reset;
}
