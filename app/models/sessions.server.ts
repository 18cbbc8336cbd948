import { createHash, randomBytes } from "node:crypto";
import type { Knex } from "knex";

// Sign-in sessions kept in the database (the `sessions` table). The browser's cookie holds
// a random token; the table holds only the token's SHA-256 hash, so reading the table (a
// backup, a log of queries) does not let anyone sign in. A session belongs to one user for
// its whole life: signing in makes a new one (app/services/session.server.ts), and ending
// a user's sessions is one delete.

/** 32 random bytes, base64url without padding. */
const TOKEN = /^[A-Za-z0-9_-]{43}$/;
/** How often a session's last_seen_at is written: often enough to show activity, not on every request. */
const SEEN_EVERY_MS = 5 * 60 * 1000;
/** User-agent strings are kept for "where am I signed in"; no need to keep an unbounded header. */
const USER_AGENT_MAX = 500;

/** A fresh session token for the cookie. */
export function newSessionToken(): string {
  return randomBytes(32).toString("base64url");
}

/** The stored id of a token: its SHA-256 hash in hex; null when it is not a token we make. */
export function sessionIdOf(token: string | null | undefined): string | null {
  if (typeof token !== "string" || !TOKEN.test(token)) return null;
  return createHash("sha256").update(token).digest("hex");
}

export type SessionRecord = { userId: string; data: Record<string, unknown> };

/** Stores a new session for the user; returns the token for the cookie. */
export async function createSessionRecord(
  db: Knex,
  input: { userId: string | number; data?: Record<string, unknown>; userAgent?: string | null; expiresAt: Date; now?: Date },
): Promise<string> {
  const token = newSessionToken();
  const now = input.now ?? new Date();
  await db("sessions").insert({
    id: sessionIdOf(token)!,
    user_id: Number(input.userId),
    data: JSON.stringify(input.data ?? {}) as unknown as Record<string, unknown>,
    user_agent: input.userAgent ? input.userAgent.slice(0, USER_AGENT_MAX) : null,
    created_at: now,
    last_seen_at: now,
    expires_at: input.expiresAt,
  });
  return token;
}

/**
 * The session a token names, or null when there is none or it has expired. An expired
 * session is deleted here (the sweep, deleteExpiredSessions, catches the ones never read).
 */
export async function readSessionRecord(db: Knex, token: string | null | undefined, now = new Date()): Promise<SessionRecord | null> {
  const id = sessionIdOf(token);
  if (!id) return null;
  const row = await db("sessions").where({ id }).first("user_id", "data", "expires_at", "last_seen_at");
  if (!row) return null;
  if (row.expires_at.getTime() <= now.getTime()) {
    await db("sessions").where({ id }).delete();
    return null;
  }
  if (now.getTime() - row.last_seen_at.getTime() >= SEEN_EVERY_MS) {
    await db("sessions").where({ id }).update({ last_seen_at: now });
  }
  return { userId: String(row.user_id), data: row.data ?? {} };
}

/**
 * Replaces a live session's values (flash notices). The user is part of the condition, not
 * of the change: a session never moves to another user (signing in makes a new session), so
 * a call naming another user, or a session that has ended or expired, changes nothing.
 */
export async function updateSessionData(
  db: Knex,
  token: string | null | undefined,
  input: { userId: string | number; data: Record<string, unknown> },
  now = new Date(),
): Promise<void> {
  const id = sessionIdOf(token);
  const userId = Number(input.userId);
  if (!id || !Number.isSafeInteger(userId)) return;
  await db("sessions")
    .where({ id, user_id: userId })
    .andWhere("expires_at", ">", now)
    .update({ data: JSON.stringify(input.data) as unknown as Record<string, unknown> });
}

/** Ends one session (signing out). */
export async function deleteSession(db: Knex, token: string | null | undefined): Promise<void> {
  const id = sessionIdOf(token);
  if (!id) return;
  await db("sessions").where({ id }).delete();
}

/**
 * Ends every session of the user, on every device: after a password change, when the
 * account is deactivated or deleted. `exceptToken` keeps the session making the change
 * (a password change need not sign out the person who made it). Returns how many ended.
 */
export async function endUserSessions(db: Knex, userId: string | number, options: { exceptToken?: string | null } = {}): Promise<number> {
  const query = db("sessions").where({ user_id: Number(userId) });
  const keep = sessionIdOf(options.exceptToken);
  if (keep) query.whereNot({ id: keep });
  return query.delete();
}

/** Deletes sessions past their expiry; returns how many. The worker's sweep calls it. */
export async function deleteExpiredSessions(db: Knex, now = new Date()): Promise<number> {
  return db("sessions").where("expires_at", "<=", now).delete();
}
