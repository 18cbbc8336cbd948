import { createCookie, createSessionStorage, redirect, type Session, type SessionStorage } from "react-router";
import { createSessionRecord, deleteSession, readSessionRecord, updateSessionData } from "~/models/sessions.server";
import { db } from "./db.server";
import { serverEnv } from "./env.server";

// Sessions live in the database (app/models/sessions.server.ts); the signed cookie holds
// only a random token. Signing out deletes the session, so a copy of the cookie taken
// before stops working, and endUserSessions ends a user's sessions on every device.

type SessionData = {
  userId: string;
  /** Read once, when the session is made, into its own column; not kept in `data`. */
  userAgent?: string;
};
type SessionFlash = { notice: string };

/** How long a session lasts from sign-in. Later commits (a flash notice) do not extend it. */
const SESSION_SECONDS = 60 * 60 * 24 * 14;

let storage: SessionStorage<SessionData, SessionFlash> | undefined;

export function sessionStorage(): SessionStorage<SessionData, SessionFlash> {
  if (storage) return storage;
  const env = serverEnv();
  const cookie = createCookie("__varroute", {
    httpOnly: true,
    sameSite: "lax",
    path: "/",
    // Keyed off an env variable, not NODE_ENV, so tests over http on loopback work.
    secure: env.COOKIE_SECURE === "true",
    secrets: env.sessionSecrets,
    maxAge: SESSION_SECONDS,
  });
  storage = createSessionStorage<SessionData, SessionFlash>({
    cookie,
    async createData(data, expires) {
      const { userId, userAgent, ...rest } = data;
      // Every session belongs to a signed-in user (flash notices included).
      if (!userId) throw new Error("A session needs a user: call createUserSession to start one.");
      return createSessionRecord(db, {
        userId,
        userAgent,
        data: rest,
        expiresAt: expires ?? new Date(Date.now() + SESSION_SECONDS * 1000),
      });
    },
    async readData(token) {
      const record = await readSessionRecord(db, token);
      return record ? { ...record.data, userId: record.userId } : null;
    },
    async updateData(token, data) {
      const { userId, userAgent: _userAgent, ...rest } = data;
      if (userId) await updateSessionData(db, token, { userId, data: rest });
    },
    async deleteData(token) {
      await deleteSession(db, token);
    },
  });
  return storage;
}

/** The request's session; a missing, ended or expired one comes back empty. */
export function getSession(request: Request): Promise<Session<SessionData, SessionFlash>> {
  return sessionStorage().getSession(request.headers.get("Cookie"));
}

/** The token of the request's session ("" when there is none), e.g. for endUserSessions' exceptToken. */
export async function sessionToken(request: Request): Promise<string> {
  return (await getSession(request)).id;
}

/**
 * Starts a session for the user and redirects to `to`. Any session the request came with
 * is deleted first and a new token made, so a token planted before sign-in (session
 * fixation) or the previous user's session on a shared computer never carries over.
 */
export async function createUserSession(request: Request, userId: string, to: string): Promise<never> {
  const current = await getSession(request);
  if (current.id) await deleteSession(db, current.id);
  const session = await sessionStorage().getSession();
  session.set("userId", userId);
  const userAgent = request.headers.get("User-Agent");
  if (userAgent) session.set("userAgent", userAgent);
  throw redirect(to, { headers: { "Set-Cookie": await sessionStorage().commitSession(session) } });
}

/** Ends the request's session (deletes it on the server and clears the cookie), then redirects. */
export async function destroyUserSession(request: Request, to = "/sign-in"): Promise<never> {
  const session = await getSession(request);
  throw redirect(to, { headers: { "Set-Cookie": await sessionStorage().destroySession(session) } });
}
