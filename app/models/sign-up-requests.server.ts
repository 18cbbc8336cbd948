import { createHash, randomBytes } from "node:crypto";
import type { Knex } from "knex";
import { signUpAccountExistsEmail, signUpConfirmEmail } from "~/emails/sign-up";
import { serverEnv } from "~/services/env.server";
import { requestEmailDelivery } from "~/services/jobs.server";
import { queueEmail } from "./emails.server";
import { hashPassword, insertCustomerAccount, normaliseEmail } from "./users.server";

// Customer sign-up in two steps, so the form never tells whether an address has an account:
// requestSignUp answers every valid form alike and e-mails the address either a single-use
// link (a new address) or a note that it has an account already; confirmSignUp, from the
// link, makes the account. The link's token is 32 random bytes; the table keeps its SHA-256.

/** How long a sign-up link works. */
export const SIGN_UP_LINK_HOURS = 24;
/** Links e-mailed to one new address in an hour, at most: the form is open to anyone. */
const LINKS_PER_HOUR = 3;
/** Requests are deleted this long after they expire (the sweep runs on each new request). */
const KEEP_EXPIRED_DAYS = 7;
const HOUR_MS = 60 * 60 * 1000;
/** 32 random bytes, base64url without padding. */
const TOKEN = /^[A-Za-z0-9_-]{43}$/;

/** The stored hash of a link's token, or null when the text is not a token we make. */
export function signUpTokenHash(token: string | null | undefined): string | null {
  if (typeof token !== "string" || !TOKEN.test(token)) return null;
  return createHash("sha256").update(token).digest("hex");
}

export type SignUpInput = { name: string; email: string; phone?: string | null; password: string };

/**
 * Records a sign-up and queues its e-mail: the confirmation link for an address without an
 * account, or the "you already have an account" note. The caller answers the same either
 * way. Returns the queued e-mail's id, or null when none was queued (the address had its
 * share of e-mails this hour).
 */
export async function requestSignUp(db: Knex, input: SignUpInput, options: { now?: Date } = {}): Promise<number | null> {
  const now = options.now ?? new Date();
  const email = normaliseEmail(input.email);
  // Hashed whether or not the address has an account, so both answers take as long.
  const passwordHash = await hashPassword(input.password);
  const token = randomBytes(32).toString("base64url");
  const appUrl = serverEnv().APP_URL.replace(/\/+$/, "");

  const emailId = await db.transaction(async (trx) => {
    // One request per address at a time, so the hourly count holds under parallel posts.
    await trx.raw("select pg_advisory_xact_lock(hashtext(?))", [`sign_up:${email}`]);
    await trx("sign_up_requests")
      .where("expires_at", "<", new Date(now.getTime() - KEEP_EXPIRED_DAYS * 24 * HOUR_MS))
      .delete();

    const user = await trx("users").where({ email }).first("id", "name");
    if (user) {
      const customer = await trx("customers").where({ user_id: user.id }).first("id");
      return queueEmail(trx, {
        kind: "sign_up_account_exists",
        to: email,
        ...signUpAccountExistsEmail({ name: user.name, signInUrl: `${appUrl}/sign-in`, resetUrl: `${appUrl}/forgot-password` }),
        customerId: customer?.id ?? null,
        // At most one an hour, however often the form is sent with this address.
        dedupeKey: `sign_up_account_exists:${user.id}:${now.toISOString().slice(0, 13)}`,
      });
    }

    const recent = await trx("sign_up_requests")
      .where({ email })
      .where("created_at", ">", new Date(now.getTime() - HOUR_MS))
      .count<{ n: number }[]>("* as n")
      .first();
    if (Number(recent?.n ?? 0) >= LINKS_PER_HOUR) return null;

    const [request] = await trx("sign_up_requests")
      .insert({
        token_hash: signUpTokenHash(token)!,
        name: input.name,
        email,
        phone: input.phone ?? null,
        password_hash: passwordHash,
        created_at: now,
        expires_at: new Date(now.getTime() + SIGN_UP_LINK_HOURS * HOUR_MS),
      })
      .returning("id");
    return queueEmail(trx, {
      kind: "sign_up_confirm",
      to: email,
      ...signUpConfirmEmail({ name: input.name, confirmUrl: `${appUrl}/sign-up/confirm/${token}`, validHours: SIGN_UP_LINK_HOURS }),
      dedupeKey: `sign_up_confirm:${request.id}`,
    });
  });
  if (emailId !== null && !db.isTransaction) await requestEmailDelivery([emailId]);
  return emailId;
}

export type SignUpConfirmation =
  | { outcome: "created"; userId: string }
  /** Unknown, expired or used already. */
  | { outcome: "invalid" }
  /** The address got an account after the link was sent: sign in instead. */
  | { outcome: "account-exists" };

function isTakenEmail(error: unknown): boolean {
  const pg = error as { code?: unknown; constraint?: unknown } | null;
  return typeof pg === "object" && pg !== null && pg.code === "23505" && pg.constraint === "users_email_unique";
}

/**
 * Follows a sign-up link: makes the customer account from the request (the user, the
 * customer record and the audit entry, as createCustomerAccount does) and marks the request
 * used, in one transaction. A link works once, and not after it expires.
 */
export async function confirmSignUp(db: Knex, token: string, options: { now?: Date } = {}): Promise<SignUpConfirmation> {
  const now = options.now ?? new Date();
  const tokenHash = signUpTokenHash(token);
  if (!tokenHash) return { outcome: "invalid" };
  try {
    return await db.transaction(async (trx): Promise<SignUpConfirmation> => {
      // Locked, so the same link followed twice at once makes one account.
      const request = await trx("sign_up_requests").where({ token_hash: tokenHash }).forUpdate().first();
      if (!request || request.used_at !== null || request.expires_at.getTime() <= now.getTime()) return { outcome: "invalid" };
      if (await trx("users").where({ email: request.email }).first("id")) return { outcome: "account-exists" };
      const userId = await insertCustomerAccount(trx, {
        name: request.name,
        email: request.email,
        phone: request.phone,
        passwordHash: request.password_hash,
      });
      // Used: only the token's hash and the time stay (until the sweep), not the person's details.
      await trx("sign_up_requests").where({ id: request.id }).update({ used_at: now, name: "", phone: null, password_hash: "" });
      // The address's other links could only say "sign in" now; they and their password hashes go.
      await trx("sign_up_requests").where({ email: request.email }).whereNot({ id: request.id }).delete();
      return { outcome: "created", userId };
    });
  } catch (error) {
    // Two different links for one address followed at once: the second meets the first's user.
    if (isTakenEmail(error)) return { outcome: "account-exists" };
    throw error;
  }
}
