import { createHash } from "node:crypto";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { deleteCustomerAccount } from "~/models/account-data.server";
import { deleteExpiredSessions, endUserSessions } from "~/models/sessions.server";
import { createCustomerAccount } from "~/models/users.server";
import { loader as portalLoader } from "~/routes/portal/layout";
import { action as signInAction, loader as signInLoader } from "~/routes/public/sign-in";
import { action as signOutAction } from "~/routes/public/sign-out";
import { db } from "~/services/db.server";
import { getSession, sessionStorage, sessionToken } from "~/services/session.server";
import { resetDatabase } from "./reset-database";

afterAll(() => db.destroy());
beforeEach(() => resetDatabase(db));

const ROBIN = { name: "Robin Hive", email: "robin@example.test", password: "correct horse battery" };
const SAM = { name: "Sam Comb", email: "sam@example.test", password: "another good password" };

let address = 0;
/** A new client address per sign-in, so the sign-in limits never get in the way. */
function nextAddress() {
  address += 1;
  return `198.51.100.${address % 250}`;
}

/** What a route module threw or returned. */
async function outcome(run: () => unknown): Promise<unknown> {
  try {
    return await run();
  } catch (thrown) {
    return thrown;
  }
}

function asResponse(value: unknown): Response {
  expect(value).toBeInstanceOf(Response);
  return value as Response;
}

/** The "name=value" part of a Set-Cookie header, to send back as a Cookie header. */
function cookieOf(response: Response): string {
  const header = response.headers.get("Set-Cookie");
  expect(header).toMatch(/^__varroute=/);
  return header!.split(";")[0];
}

function signInRequest(person: { email: string; password: string }, options: { cookie?: string; redirectTo?: string; userAgent?: string } = {}) {
  const query = options.redirectTo === undefined ? "" : `?redirectTo=${encodeURIComponent(options.redirectTo)}`;
  const headers: Record<string, string> = { "Content-Type": "application/x-www-form-urlencoded", "X-Forwarded-For": nextAddress() };
  if (options.cookie) headers.Cookie = options.cookie;
  if (options.userAgent) headers["User-Agent"] = options.userAgent;
  return new Request(`http://127.0.0.1/sign-in${query}`, { method: "POST", headers, body: new URLSearchParams({ email: person.email, password: person.password }) });
}

/** Signs in through the sign-in page's action; returns the redirect. */
async function signIn(person: { email: string; password: string }, options: Parameters<typeof signInRequest>[1] = {}): Promise<Response> {
  const response = asResponse(await outcome(() => signInAction({ request: signInRequest(person, options), params: {}, context: {} } as never)));
  expect(response.status).toBe(302);
  return response;
}

/** Who the portal's layout loader (a protected loader) sees with this cookie: a name, or "sent to sign-in". */
async function portalSees(cookie: string): Promise<string> {
  const request = new Request("http://127.0.0.1/portal/bookings", { headers: { Cookie: cookie } });
  const result = await outcome(() => portalLoader({ request, params: {}, context: {} } as never));
  if (result instanceof Response) {
    expect(result.status).toBe(302);
    expect(result.headers.get("Location")).toBe("/sign-in?redirectTo=%2Fportal%2Fbookings");
    return "sent to sign-in";
  }
  return (result as { user: { name: string } }).user.name;
}

async function signOut(cookie: string): Promise<Response> {
  const request = new Request("http://127.0.0.1/sign-out", { method: "POST", headers: { Cookie: cookie } });
  return asResponse(await outcome(() => signOutAction({ request, params: {}, context: {} } as never)));
}

async function sessionCount(userId: string | number): Promise<number> {
  const row = (await db("sessions").where({ user_id: Number(userId) }).first(db.raw("count(*)::int as n"))) as unknown as { n: number };
  return row.n;
}

async function tokenOf(cookie: string): Promise<string> {
  return sessionToken(new Request("http://127.0.0.1/", { headers: { Cookie: cookie } }));
}

describe("signing out", () => {
  it("ends the session on the server: the cookie from before no longer signs anyone in", async () => {
    const robinId = await createCustomerAccount(db, ROBIN);
    const cookie = cookieOf(await signIn(ROBIN));
    expect(await portalSees(cookie)).toBe(ROBIN.name);

    const out = await signOut(cookie);
    expect(out.status).toBe(302);
    expect(out.headers.get("Location")).toBe("/sign-in?signedOut=1");
    expect(out.headers.get("Set-Cookie")).toMatch(/^__varroute=;.*(Max-Age=0|Expires=Thu, 01 Jan 1970)/);

    // Someone who kept a copy of the cookie sends it again.
    expect(await portalSees(cookie)).toBe("sent to sign-in");
    expect(await sessionCount(robinId)).toBe(0);
  });
});

describe("signing in", () => {
  it("stores only a hash of the cookie's token, with the browser it came from", async () => {
    const robinId = await createCustomerAccount(db, ROBIN);
    const cookie = cookieOf(await signIn(ROBIN, { userAgent: "Mozilla/5.0 (test phone)" }));
    const token = await tokenOf(cookie);
    expect(token).toMatch(/^[A-Za-z0-9_-]{43}$/);
    const rows = await db("sessions").where({ user_id: Number(robinId) }).select("*");
    expect(rows).toHaveLength(1);
    expect(rows[0].id).toBe(createHash("sha256").update(token).digest("hex"));
    expect(rows[0].user_agent).toBe("Mozilla/5.0 (test phone)");
    expect(JSON.stringify(rows[0])).not.toContain(token);
    expect(rows[0].expires_at.getTime()).toBeGreaterThan(Date.now() + 13 * 24 * 3600 * 1000);
  });

  it("makes a new session and ends the one the request came with", async () => {
    const robinId = await createCustomerAccount(db, ROBIN);
    const first = cookieOf(await signIn(ROBIN));
    const second = cookieOf(await signIn(ROBIN, { cookie: first }));
    expect(await tokenOf(second)).not.toBe(await tokenOf(first));
    expect(await portalSees(first)).toBe("sent to sign-in");
    expect(await portalSees(second)).toBe(ROBIN.name);
    expect(await sessionCount(robinId)).toBe(1);
  });

  it("never keeps a session planted before sign-in (session fixation)", async () => {
    // Sam signs in, then leaves his cookie in Robin's browser.
    await createCustomerAccount(db, ROBIN);
    const samId = await createCustomerAccount(db, SAM);
    const planted = cookieOf(await signIn(SAM));
    const robin = cookieOf(await signIn(ROBIN, { cookie: planted }));
    expect(await tokenOf(robin)).not.toBe(await tokenOf(planted));
    expect(await portalSees(robin)).toBe(ROBIN.name);
    // The planted token is dead: it names neither Robin nor Sam any more.
    expect(await portalSees(planted)).toBe("sent to sign-in");
    expect(await sessionCount(samId)).toBe(0);
  });
});

describe("ending a user's sessions", () => {
  it("ends every session of the user on every device, and no one else's", async () => {
    const robinId = await createCustomerAccount(db, ROBIN);
    await createCustomerAccount(db, SAM);
    const phone = cookieOf(await signIn(ROBIN));
    const laptop = cookieOf(await signIn(ROBIN));
    const sam = cookieOf(await signIn(SAM));

    expect(await endUserSessions(db, robinId)).toBe(2);
    expect(await portalSees(phone)).toBe("sent to sign-in");
    expect(await portalSees(laptop)).toBe("sent to sign-in");
    expect(await portalSees(sam)).toBe(SAM.name);
  });

  it("can keep the session that asked for it", async () => {
    const robinId = await createCustomerAccount(db, ROBIN);
    const here = cookieOf(await signIn(ROBIN));
    const elsewhere = cookieOf(await signIn(ROBIN));

    expect(await endUserSessions(db, robinId, { exceptToken: await tokenOf(here) })).toBe(1);
    expect(await portalSees(here)).toBe(ROBIN.name);
    expect(await portalSees(elsewhere)).toBe("sent to sign-in");
  });

  it("happens when the customer deletes their account", async () => {
    const robinId = await createCustomerAccount(db, ROBIN);
    const customer = (await db("customers").where({ user_id: Number(robinId) }).first("id"))!;
    const phone = cookieOf(await signIn(ROBIN));
    const laptop = cookieOf(await signIn(ROBIN));
    expect(await sessionCount(robinId)).toBe(2);

    await deleteCustomerAccount(db, { customerId: customer.id, actorUserId: robinId });
    // Deleted, not merely refused because the user is disabled.
    expect(await sessionCount(robinId)).toBe(0);
    expect(await portalSees(phone)).toBe("sent to sign-in");
    expect(await portalSees(laptop)).toBe("sent to sign-in");
  });
});

describe("expiry", () => {
  it("refuses an expired session and deletes it", async () => {
    const robinId = await createCustomerAccount(db, ROBIN);
    const cookie = cookieOf(await signIn(ROBIN));
    await db("sessions").where({ user_id: Number(robinId) }).update({ expires_at: new Date(Date.now() - 1000) });

    expect(await portalSees(cookie)).toBe("sent to sign-in");
    expect(await sessionCount(robinId)).toBe(0);
  });

  it("the sweep deletes expired sessions and keeps live ones", async () => {
    const robinId = await createCustomerAccount(db, ROBIN);
    const samId = await createCustomerAccount(db, SAM);
    await signIn(ROBIN);
    const sam = cookieOf(await signIn(SAM));
    await db("sessions").where({ user_id: Number(robinId) }).update({ expires_at: new Date(Date.now() - 1000) });

    expect(await deleteExpiredSessions(db)).toBe(1);
    expect(await sessionCount(robinId)).toBe(0);
    expect(await sessionCount(samId)).toBe(1);
    expect(await portalSees(sam)).toBe(SAM.name);
  });
});

describe("flash notices", () => {
  it("are kept in the session on the server and shown once", async () => {
    const robinId = await createCustomerAccount(db, ROBIN);
    const cookie = cookieOf(await signIn(ROBIN));
    const request = () => new Request("http://127.0.0.1/portal", { headers: { Cookie: cookie } });

    const session = await getSession(request());
    session.flash("notice", "Your booking is saved.");
    const committed = (await sessionStorage().commitSession(session)).split(";")[0];
    // Same session, same token: the notice is in the database, not in the cookie.
    expect(committed).toBe(cookie);
    const row = (await db("sessions").where({ user_id: Number(robinId) }).first("data"))!;
    expect(JSON.stringify(row.data)).toContain("Your booking is saved.");

    const shown = await getSession(request());
    expect(shown.get("notice")).toBe("Your booking is saved.");
    await sessionStorage().commitSession(shown);
    expect((await getSession(request())).get("notice")).toBeUndefined();
    expect(await portalSees(cookie)).toBe(ROBIN.name);
  });
});

describe("the sign-in page's redirectTo", () => {
  const HOSTILE = ["/\t/evil.example", "/%09/evil.example", "//evil.example", "/\\evil.example", "https://evil.example", "/x\r\nSet-Cookie: a=b", "/\u0000", " /portal"];

  it("sends the customer only to a path on this site after signing in", async () => {
    await createCustomerAccount(db, ROBIN);
    for (const redirectTo of HOSTILE) {
      const response = await signIn(ROBIN, { redirectTo });
      expect(response.headers.get("Location"), JSON.stringify(redirectTo)).toBe("/portal");
    }
    expect((await signIn(ROBIN, { redirectTo: "/portal/invoices?year=2026" })).headers.get("Location")).toBe("/portal/invoices?year=2026");
  });

  it("shows the page without the hostile target, and sends a signed-in customer home", async () => {
    await createCustomerAccount(db, ROBIN);
    const cookie = cookieOf(await signIn(ROBIN));
    for (const redirectTo of HOSTILE) {
      const url = `http://127.0.0.1/sign-in?redirectTo=${encodeURIComponent(redirectTo)}`;
      const page = await outcome(() => signInLoader({ request: new Request(url), params: {}, context: {} } as never));
      expect(page, JSON.stringify(redirectTo)).toEqual({ signedOut: false, redirectTo: "" });
      const signedIn = asResponse(await outcome(() => signInLoader({ request: new Request(url, { headers: { Cookie: cookie } }), params: {}, context: {} } as never)));
      expect(signedIn.headers.get("Location"), JSON.stringify(redirectTo)).toBe("/portal");
    }
  });

  it("answers 400, not 500, when the sign-in is not a form", async () => {
    const request = new Request("http://127.0.0.1/sign-in", {
      method: "POST",
      headers: { "Content-Type": "application/json", "X-Forwarded-For": nextAddress() },
      body: JSON.stringify({ email: ROBIN.email, password: ROBIN.password }),
    });
    const refused = await outcome(() => signInAction({ request, params: {}, context: {} } as never));
    expect(refused).toMatchObject({ init: { status: 400 } });
  });

  it("keeps the e-mail and shows the error at its field when the password is wrong", async () => {
    await createCustomerAccount(db, ROBIN);
    const wrong = await outcome(() => signInAction({ request: signInRequest({ email: ROBIN.email, password: "not it" }), params: {}, context: {} } as never));
    expect(wrong).toMatchObject({ data: { email: ROBIN.email, field: "password" }, init: { status: 400 } });
    expect(await db("sessions").count("* as n").first()).toEqual({ n: 0 });
  });
});
