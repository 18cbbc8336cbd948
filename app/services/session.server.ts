import { createCookieSessionStorage, redirect } from "react-router";
import { serverEnv } from "./env.server";

type SessionData = { userId: string };
type SessionFlash = { notice: string };

let storage: ReturnType<typeof createCookieSessionStorage<SessionData, SessionFlash>> | undefined;

export function sessionStorage() {
  if (storage) return storage;
  const env = serverEnv();
  storage = createCookieSessionStorage<SessionData, SessionFlash>({
    cookie: {
      name: "__varroute",
      httpOnly: true,
      sameSite: "lax",
      path: "/",
      // Keyed off an env variable, not NODE_ENV, so tests over http on loopback work.
      secure: env.COOKIE_SECURE === "true",
      secrets: env.sessionSecrets,
      maxAge: 60 * 60 * 24 * 14,
    },
  });
  return storage;
}

export function getSession(request: Request) {
  return sessionStorage().getSession(request.headers.get("Cookie"));
}

/** Starts a session for the user and redirects to `to`. */
export async function createUserSession(request: Request, userId: string, to: string): Promise<never> {
  const session = await getSession(request);
  session.set("userId", userId);
  throw redirect(to, { headers: { "Set-Cookie": await sessionStorage().commitSession(session) } });
}

export async function destroyUserSession(request: Request, to = "/sign-in"): Promise<never> {
  const session = await getSession(request);
  throw redirect(to, { headers: { "Set-Cookie": await sessionStorage().destroySession(session) } });
}
