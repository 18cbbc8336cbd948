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

/** Only accept same-site relative paths as post-sign-in destinations. */
export function safeRedirectPath(to: string | null | undefined, fallback: string): string {
  if (!to || !to.startsWith("/") || to.startsWith("//") || to.startsWith("/\\")) return fallback;
  return to;
}
