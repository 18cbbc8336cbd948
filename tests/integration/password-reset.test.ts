import { createHash, randomBytes } from "node:crypto";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { createCustomerAccount, hashPassword, verifyCredentials } from "~/models/users.server";
import { action as forgotAction, loader as forgotLoader } from "~/routes/public/forgot-password";
import { action as resetAction, loader as resetLoader } from "~/routes/public/reset-password";
import { action as signInAction } from "~/routes/public/sign-in";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { withPeerAddress } from "~/services/sign-in-limits.server";
import { address, count, deliverTo, NEW_PASSWORD, outcome, PASSWORD as OLD_PASSWORD, post, whoIs } from "./account-fixtures";
import { waitForEmail } from "./mail-sink";
import { resetDatabase } from "./reset-database";

// "Forgot your password?" through the pages' loaders and actions, with the e-mails going
// through the real local SMTP sink (mail-sink.ts). The sink is shared with other test files,
// so every address here is unique to this run.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

/** Sends the forgot-password form, as if from `peer` when given. */
function forgot(email: string, options: { peer?: string; cookie?: string } = {}) {
  const call = () => outcome(() => forgotAction({ request: post("/forgot-password", { email }, options.cookie), params: {}, context: {} } as never));
  return options.peer ? withPeerAddress(options.peer, call) : call();
}

function openLink(token: string) {
  return outcome(() => resetLoader({ request: new Request(`http://127.0.0.1/reset-password/${token}`), params: { token }, context: {} } as never));
}

function setPassword(token: string, password: string, confirm = password, cookie?: string) {
  const request = post(`/reset-password/${token}`, { password, confirm }, cookie);
  return outcome(() => resetAction({ request, params: { token }, context: {} } as never));
}

function signIn(email: string, password: string) {
  return outcome(() => signInAction({ request: post("/sign-in", { email, password }), params: {}, context: {} } as never));
}

/** The "name=value" part of a response's Set-Cookie header. */
function cookieOf(response: unknown): string {
  expect(response).toBeInstanceOf(Response);
  const header = (response as Response).headers.get("Set-Cookie");
  expect(header).toMatch(/^__varroute=/);
  return header!.split(";")[0];
}

const LINK = /\/reset-password\/([A-Za-z0-9_-]{43})\b/;

/** Delivers the link queued for `email` and returns its token, once the e-mail has reached the sink. */
async function linkInInbox(email: string): Promise<string> {
  expect(await deliverTo(email)).toBe(1);
  // The sink may hold this address's earlier links: the newest outbox row names the one to wait for.
  const newest = await db("email_log").where({ to_address: email, kind: "password_reset" }).orderBy("id", "desc").first("text_body");
  const token = LINK.exec(newest?.text_body ?? "")?.[1];
  expect(token).toBeDefined();
  const inSink = await waitForEmail(email, (m) => m.subject === "Reset your Varroute password" && (m.text ?? "").includes(`/reset-password/${token}`));
  expect(inSink.html).toContain(`/reset-password/${token}`);
  return token!;
}

/** Asks for a link for `email` and returns the token from the e-mail that reached the sink. */
async function tokenFromInbox(email: string): Promise<string> {
  expect(await forgot(email)).toMatchObject({ sentTo: email });
  return linkInInbox(email);
}

async function customer(name = "Robin Hive") {
  const email = address(name.split(" ")[0].toLowerCase());
  const id = await createCustomerAccount(db, { name, email, password: OLD_PASSWORD });
  return { id, email, name };
}

type Refusal = { data: Record<string, unknown> & { errors?: Record<string, string> }; init: { status: number } };

describe("asking for a link", () => {
  it("answers a known, an unknown and a disabled address alike, and e-mails only the active account a link", async () => {
    const robin = await customer();
    const stranger = address("nobody");
    const gone = address("gone");
    await db("users").insert({ email: gone, password_hash: await hashPassword(OLD_PASSWORD), role: "office", name: "Gone Away", disabled_at: new Date() });

    const answers = await Promise.all([forgot(robin.email), forgot(stranger), forgot(gone)]);
    expect(answers).toEqual([
      { sentTo: robin.email, linkMinutes: 60 },
      { sentTo: stranger, linkMinutes: 60 },
      { sentTo: gone, linkMinutes: 60 },
    ]);
    expect(await count("email_log", { to_address: stranger })).toBe(0);
    expect(await count("email_log", { to_address: gone })).toBe(0);
    expect(await count("password_resets")).toBe(1);

    const token = await linkInInbox(robin.email);
    const message = await waitForEmail(robin.email, (m) => (m.text ?? "").includes(token));
    expect(message.text).toContain("Hello Robin Hive,");
    // Only the token's hash is stored, never the token.
    const rows = await db("password_resets").select("*");
    const stored = rows.find((r) => r.token_hash === createHash("sha256").update(token).digest("hex"));
    expect(stored).toMatchObject({ user_id: Number(robin.id), used_at: null });
    expect(JSON.stringify(rows)).not.toContain(token);
    expect(stored!.expires_at.getTime() - stored!.created_at.getTime()).toBe(60 * 60 * 1000);
  });

  it("refuses a malformed address at its field, and sends a signed-in person home", async () => {
    const refused = (await forgot("not an address")) as Refusal;
    expect(refused.init.status).toBe(400);
    expect(refused.data.errors?.email).toBe("Enter a valid e-mail address.");

    const robin = await customer();
    const cookie = cookieOf(await signIn(robin.email, OLD_PASSWORD));
    const page = await outcome(() => forgotLoader({ request: new Request("http://127.0.0.1/forgot-password", { headers: { Cookie: cookie } }), params: {}, context: {} } as never));
    expect(page).toBeInstanceOf(Response);
    expect((page as Response).headers.get("Location")).toBe("/portal");
    const sent = await forgot(robin.email, { cookie });
    expect((sent as Response).headers.get("Location")).toBe("/portal");
    expect(await count("email_log", { to_address: robin.email, kind: "password_reset" })).toBe(0);
  });

  it("answers 400, not 500, when the body is not a form", async () => {
    const robin = await customer();
    const json = (url: string) =>
      new Request(`http://127.0.0.1${url}`, { method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify({ email: robin.email }) });
    expect(await outcome(() => forgotAction({ request: json("/forgot-password"), params: {}, context: {} } as never))).toMatchObject({ init: { status: 400 } });
    const token = await tokenFromInbox(robin.email);
    expect(await outcome(() => resetAction({ request: json(`/reset-password/${token}`), params: { token }, context: {} } as never))).toMatchObject({ init: { status: 400 } });
    expect(await verifyCredentials(db, robin.email, OLD_PASSWORD)).toBe(robin.id);
  });

  it("e-mails one address at most 3 links an hour, answering alike each time", async () => {
    const robin = await customer();
    for (let i = 0; i < 5; i++) expect(await forgot(robin.email)).toEqual({ sentTo: robin.email, linkMinutes: 60 });
    expect(await count("email_log", { to_address: robin.email, kind: "password_reset" })).toBe(3);
    expect(await count("password_resets")).toBe(3);
  });

  it("refuses a network that asks too often, whatever the addresses, and not another network", async () => {
    const robin = await customer();
    for (let i = 0; i < 10; i++) expect(await forgot(address("probe"), { peer: "203.0.113.9" })).toMatchObject({ linkMinutes: 60 });
    const refused = (await forgot(robin.email, { peer: "203.0.113.9" })) as Refusal;
    expect(refused.init.status).toBe(429);
    expect(refused.data.errors?.form).toMatch(/^Too many requests from your network\. Try again in \d+ minutes?/);
    expect(await count("email_log", { to_address: robin.email })).toBe(0);
    // The same address from another network still gets its link.
    expect(await forgot(robin.email, { peer: "198.51.100.20" })).toEqual({ sentTo: robin.email, linkMinutes: 60 });
    expect(await count("email_log", { to_address: robin.email, kind: "password_reset" })).toBe(1);
  });
});

describe("following the link", () => {
  it("sets the new password once, ends every session, and signs the person in to their home", async () => {
    const robin = await customer();
    const phone = cookieOf(await signIn(robin.email, OLD_PASSWORD));
    const laptop = cookieOf(await signIn(robin.email, OLD_PASSWORD));
    // Two failed sign-ins, which the reset forgets.
    for (const guess of ["wrong guess one", "wrong guess two"]) expect(await signIn(robin.email, guess)).toMatchObject({ init: { status: 400 } });
    const failuresOf = () => db("sign_in_failures").where("key", "like", "%:email:%").orWhere("key", "like", "%:pair:%").count<{ n: number }[]>("* as n").first();
    expect(Number((await failuresOf())?.n)).toBeGreaterThan(0);

    const earlier = await tokenFromInbox(robin.email);
    const token = await tokenFromInbox(robin.email);
    expect(await openLink(token)).toEqual({ invalid: false, email: robin.email });

    const response = await setPassword(token, NEW_PASSWORD);
    expect(response).toBeInstanceOf(Response);
    expect((response as Response).status).toBe(302);
    expect((response as Response).headers.get("Location")).toBe("/portal");
    const cookie = cookieOf(response);
    expect(await whoIs(cookie)).toMatchObject({ id: robin.id, email: robin.email });

    // Every earlier session ended; only the new one is left.
    expect(await whoIs(phone)).toBeNull();
    expect(await whoIs(laptop)).toBeNull();
    expect(await count("sessions", { user_id: Number(robin.id) })).toBe(1);
    expect(await verifyCredentials(db, robin.email, NEW_PASSWORD)).toBe(robin.id);
    expect(await verifyCredentials(db, robin.email, OLD_PASSWORD)).toBeNull();
    expect(Number((await failuresOf())?.n)).toBe(0);

    // The link, and the account's other open link, work no more.
    for (const used of [token, earlier]) {
      const again = (await openLink(used)) as Refusal;
      expect(again.init.status).toBe(404);
      expect(again.data.invalid).toBe(true);
      expect(((await setPassword(used, "another fresh passphrase here")) as Refusal).init.status).toBe(404);
    }
    expect(await verifyCredentials(db, robin.email, NEW_PASSWORD)).toBe(robin.id);

    const audit = await db("audit_log").where({ action: "user.password_reset", entity_type: "user", entity_id: robin.id }).select("*");
    expect(audit).toHaveLength(1);
    expect(audit[0].actor_user_id).toBe(Number(robin.id));

    expect(await deliverTo(robin.email)).toBe(1);
    const notice = await waitForEmail(robin.email, (m) => m.subject === "Your Varroute password was changed");
    expect(notice.text).toContain("reset link");
    expect(notice.text).toContain("/forgot-password");
  });

  it("sends staff to their own home", async () => {
    const email = address("crew");
    const [user] = await db("users").insert({ email, password_hash: await hashPassword(OLD_PASSWORD), role: "crew", name: "Casey Smoke" }).returning("id");
    const token = await tokenFromInbox(email);
    const response = await setPassword(token, NEW_PASSWORD);
    expect((response as Response).headers.get("Location")).toBe("/crew");
    expect(await verifyCredentials(db, email, NEW_PASSWORD)).toBe(String(user.id));
  });

  it("works once when the same link is sent twice at once", async () => {
    const robin = await customer();
    const token = await tokenFromInbox(robin.email);
    const results = await Promise.all([setPassword(token, NEW_PASSWORD), setPassword(token, "second different passphrase")]);
    expect(results.filter((r) => r instanceof Response)).toHaveLength(1);
    expect((results.filter((r) => !(r instanceof Response)) as Refusal[]).map((r) => r.init.status)).toEqual([404]);
    expect(await count("audit_log", { action: "user.password_reset" })).toBe(1);
  });

  it("refuses an expired link, an unknown one and a mangled one with a 404, and changes nothing", async () => {
    const robin = await customer();
    const token = await tokenFromInbox(robin.email);
    // As if the link had been sent 61 minutes ago.
    await db("password_resets").update({
      created_at: db.raw("now() - interval '61 minutes'") as unknown as Date,
      expires_at: db.raw("now() - interval '1 minute'") as unknown as Date,
    });
    for (const tried of [token, randomBytes(32).toString("base64url"), token.slice(0, 20), "not-a-token"]) {
      const page = (await openLink(tried)) as Refusal;
      expect(page.init.status, tried).toBe(404);
      expect(page.data).toMatchObject({ invalid: true, linkMinutes: 60 });
      expect(((await setPassword(tried, NEW_PASSWORD)) as Refusal).init.status, tried).toBe(404);
    }
    expect(await verifyCredentials(db, robin.email, OLD_PASSWORD)).toBe(robin.id);
    expect(await count("audit_log", { action: "user.password_reset" })).toBe(0);
  });

  it("refuses a weak or mismatched password at its field and keeps the link working", async () => {
    const robin = await customer();
    const phone = cookieOf(await signIn(robin.email, OLD_PASSWORD));
    const token = await tokenFromInbox(robin.email);

    const common = (await setPassword(token, "password123")) as Refusal;
    expect(common.init.status).toBe(400);
    expect(common.data.errors?.password).toMatch(/common passwords/);
    const own = (await setPassword(token, "RobinHive-2026-bees")) as Refusal;
    expect(own.data.errors?.password).toBe("Leave your name and e-mail address out of the password.");
    const short = (await setPassword(token, "short")) as Refusal;
    expect(short.data.errors?.password).toBe("Use at least 10 characters.");
    const differ = (await setPassword(token, NEW_PASSWORD, `${NEW_PASSWORD}!`)) as Refusal;
    expect(differ.data.errors?.confirm).toBe("The two passwords differ.");

    expect(await verifyCredentials(db, robin.email, OLD_PASSWORD)).toBe(robin.id);
    expect(await whoIs(phone)).toMatchObject({ id: robin.id });
    expect(await openLink(token)).toEqual({ invalid: false, email: robin.email });
  });
});
