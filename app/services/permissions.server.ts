import { data, redirect } from "react-router";
import { findSessionUser, type SessionUser } from "~/models/users.server";
import type { Role } from "~/models/tables";
import { db } from "./db.server";
import { getSession } from "./session.server";

/** Which roles may use each area of the app. The owner may use every staff area. */
export const AREA_ROLES = {
  portal: ["customer"],
  dispatch: ["dispatcher", "owner"],
  crew: ["crew"],
  office: ["office", "owner"],
  staff: ["dispatcher", "office", "owner"],
} as const satisfies Record<string, readonly Role[]>;

/** The page each role lands on after signing in. */
export function homeFor(role: Role): string {
  switch (role) {
    case "customer":
      return "/portal";
    case "crew":
      return "/crew";
    case "office":
      return "/office";
    case "dispatcher":
    case "owner":
      return "/dispatch";
  }
}

/** The signed-in user: the request's session, read from the session store, and its user when still enabled. */
export async function optionalUser(request: Request): Promise<SessionUser | null> {
  const session = await getSession(request);
  const userId = session.get("userId");
  if (!userId) return null;
  return findSessionUser(db, userId);
}

/** The signed-in user, or a redirect to sign-in that comes back here afterwards. */
export async function requireUser(request: Request): Promise<SessionUser> {
  const user = await optionalUser(request);
  if (user) return user;
  const url = new URL(request.url);
  const back = url.pathname + url.search;
  throw redirect(`/sign-in?redirectTo=${encodeURIComponent(back)}`);
}

/** The signed-in user when their role is one of `roles`; otherwise 403. */
export async function requireRole(request: Request, roles: readonly Role[]): Promise<SessionUser> {
  const user = await requireUser(request);
  if (!roles.includes(user.role)) {
    throw data("Your account does not have access to this page.", { status: 403 });
  }
  return user;
}

/** A customer user with their customer id (every portal loader and action uses it). */
export async function requireCustomer(request: Request): Promise<SessionUser & { customerId: string }> {
  const user = await requireRole(request, AREA_ROLES.portal);
  if (!user.customerId) throw data("No customer record is linked to this account.", { status: 403 });
  return user as SessionUser & { customerId: string };
}

// A dummy origin to resolve redirect targets against: a target that leaves it is off-site.
const SAME_ORIGIN = "http://same-origin.invalid";
/** Control characters, any whitespace (browsers drop tabs and newlines in URLs, so "/<tab>/evil" becomes "//evil") and backslashes (read as "/"). */
const UNSAFE_CHARACTER = /[\u0000-\u001f\u007f-\u009f\s\\]/u;
/** The same, once percent-escapes are decoded byte by byte (ASCII only: bytes above 0x7f are parts of UTF-8 characters). */
const ENCODED_CONTROL = /[\u0000-\u001f\u007f]/;
const ENCODED_PATH_UNSAFE = /[ \\]/;
/** Longer than any path the app makes; a Location header need not carry more. */
const REDIRECT_MAX_LENGTH = 2048;

/** Percent-escapes decoded byte by byte, never throwing: enough to see an encoded tab, slash or backslash. */
function percentDecodedBytes(value: string): string {
  return value.replace(/%([0-9a-fA-F]{2})/g, (_, hex: string) => String.fromCharCode(parseInt(hex, 16)));
}

/**
 * `to` when it is a path on this site ("/portal/invoices?year=2026"), else `fallback`.
 * Refused: anything with control characters, whitespace or backslashes; anything not
 * starting with exactly one "/" ("//evil.example", "https://evil.example", " /x"); anything
 * that resolves to another origin. The same checks apply once more to the target with its
 * percent-escapes decoded ("/%09/evil.example"), in case some later step decodes it again;
 * in the query only encoded control characters are refused ("?q=Robin%20Hive" is fine).
 */
export function safeRedirectPath(to: string | null | undefined, fallback: string): string {
  if (typeof to !== "string" || to.length === 0 || to.length > REDIRECT_MAX_LENGTH) return fallback;
  if (UNSAFE_CHARACTER.test(to)) return fallback;
  if (!to.startsWith("/") || to.startsWith("//")) return fallback;
  const decoded = percentDecodedBytes(to);
  if (ENCODED_CONTROL.test(decoded)) return fallback;
  const decodedPath = decoded.split(/[?#]/, 1)[0];
  if (ENCODED_PATH_UNSAFE.test(decodedPath) || decodedPath.startsWith("//")) return fallback;
  try {
    if (new URL(to, SAME_ORIGIN).origin !== SAME_ORIGIN) return fallback;
  } catch {
    return fallback;
  }
  return to;
}
