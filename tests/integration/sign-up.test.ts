import { randomBytes, randomUUID } from "node:crypto";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { deliverEmail } from "~/models/emails.server";
import { createCustomerAccount, verifyCredentials } from "~/models/users.server";
import { action as signUpAction } from "~/routes/public/sign-up";
import { loader as confirmLoader } from "~/routes/public/sign-up-confirm";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { optionalUser } from "~/services/permissions.server";
import { waitForEmail } from "./mail-sink";
import { resetDatabase } from "./reset-database";

// Sign-up through the page's action and the e-mailed link's loader, with the e-mail going
// through the real local SMTP sink (see mail-sink.ts). The sink is shared with other test
// files, so every address here is unique to this run.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

const run = randomUUID().slice(0, 8);
let serial = 0;
/** A fresh address for each use: the sink keeps e-mails from earlier tests and runs. */
const address = (name: string) => `${name}.${run}.${++serial}@example.test`;

const PASSWORD = "correct horse battery";

function form(email: string, overrides: Record<string, string> = {}) {
  return { name: "Robin Hive", email, phone: "607 555 0142", password: PASSWORD, confirm: PASSWORD, ...overrides };
}

/** What a route module threw or returned. */
async function outcome(run: () => unknown): Promise<unknown> {
  try {
    return await run();
  } catch (thrown) {
    return thrown;
  }
}

function signUp(fields: Record<string, string>) {
  const request = new Request("http://127.0.0.1/sign-up", {
    method: "POST",
    headers: { "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams(fields),
  });
  return outcome(() => signUpAction({ request, params: {}, context: {} } as never));
}

function follow(token: string, cookie?: string) {
  const request = new Request(`http://127.0.0.1/sign-up/confirm/${token}`, { headers: cookie ? { Cookie: cookie } : {} });
  return outcome(() => confirmLoader({ request, params: { token }, context: {} } as never));
}

/** Sends every e-mail queued for `to` through SMTP now (the worker watches another database). */
async function deliverTo(to: string): Promise<number> {
  const rows = await db("email_log").where({ to_address: to }).orderBy("id").select("id");
  for (const row of rows) expect(await deliverEmail(db, row.id)).toBe("sent");
  return rows.length;
}

const LINK = /\/sign-up\/confirm\/([A-Za-z0-9_-]{43})\b/;

/** Signs up `email` and returns the token from the link that reached the sink. */
async function tokenFromInbox(email: string): Promise<string> {
  expect(await signUp(form(email))).toMatchObject({ checkInbox: email });
  expect(await deliverTo(email)).toBe(1);
  const message = await waitForEmail(email);
  const token = LINK.exec(message.text ?? "")?.[1];
  expect(token, message.text).toBeDefined();
  return token!;
}

type Answer = { data: { outcome: string }; init: { status: number } };

async function userCount(email: string): Promise<number> {
  const row = await db("users").where({ email }).count<{ n: number }[]>("* as n").first();
  return Number(row?.n ?? 0);
}

describe("sign-up answers", () => {
  it("answers a new and an existing e-mail alike, makes no account yet, and tells each inbox the right thing", async () => {
    const newcomer = address("newcomer");
    const member = address("member");
    await createCustomerAccount(db, { name: "Sam Comb", email: member, password: "another good password" });

    const forNew = await signUp(form(newcomer));
    const forMember = await signUp(form(member));
    expect(forNew).toEqual({ checkInbox: newcomer, linkHours: 24 });
    expect(forMember).toEqual({ checkInbox: member, linkHours: 24 });
    expect(await userCount(newcomer)).toBe(0);

    expect(await deliverTo(newcomer)).toBe(1);
    expect(await deliverTo(member)).toBe(1);
    const confirm = await waitForEmail(newcomer);
    expect(confirm.subject).toBe("Confirm your e-mail to create your Varroute account");
    expect(confirm.text).toMatch(LINK);
    expect(confirm.html).toMatch(LINK);
    expect(confirm.text).toContain("Hello Robin Hive,");

    const already = await waitForEmail(member);
    expect(already.subject).toBe("You already have a Varroute account");
    expect(already.text).toContain("Hello Sam Comb,");
    expect(already.text).toContain("/sign-in");
    expect(already.text).toMatch(/\/forgot-password/);
    expect(already.text).not.toMatch(/sign-up\/confirm/);
    expect(already.html).not.toMatch(/sign-up\/confirm/);
  });

  it("refuses a weak password at its field whether or not the e-mail has an account, and sends nothing", async () => {
    const newcomer = address("weak-new");
    const member = address("weak-member");
    await createCustomerAccount(db, { name: "Sam Comb", email: member, password: "another good password" });
    for (const email of [newcomer, member]) {
      const refused = (await signUp(form(email, { password: "password123", confirm: "password123" }))) as { data: { errors: Record<string, string> }; init: { status: number } };
      expect(refused.init.status).toBe(400);
      expect(refused.data.errors.password).toMatch(/common passwords/);
    }
    expect(await db("email_log").whereIn("to_address", [newcomer, member]).count<{ n: number }[]>("* as n").first()).toEqual({ n: 0 });
    expect(await db("sign_up_requests").count<{ n: number }[]>("* as n").first()).toEqual({ n: 0 });
  });

  it("e-mails one address at most 3 links an hour, and an account holder one note an hour, answering alike each time", async () => {
    const newcomer = address("eager");
    const member = address("eager-member");
    await createCustomerAccount(db, { name: "Sam Comb", email: member, password: "another good password" });
    for (let i = 0; i < 4; i++) {
      expect(await signUp(form(newcomer))).toEqual({ checkInbox: newcomer, linkHours: 24 });
      expect(await signUp(form(member))).toEqual({ checkInbox: member, linkHours: 24 });
    }
    expect(await db("email_log").where({ to_address: newcomer }).count<{ n: number }[]>("* as n").first()).toEqual({ n: 3 });
    expect(await db("email_log").where({ to_address: member }).count<{ n: number }[]>("* as n").first()).toEqual({ n: 1 });
  });
});

describe("the sign-up link", () => {
  it("makes the customer account once, signs the person in and opens the portal", async () => {
    const email = address("robin");
    const token = await tokenFromInbox(email);

    const response = await follow(token);
    expect(response).toBeInstanceOf(Response);
    expect((response as Response).status).toBe(302);
    expect((response as Response).headers.get("Location")).toBe("/portal");
    const cookie = (response as Response).headers.get("Set-Cookie")!.split(";")[0];
    expect(await optionalUser(new Request("http://127.0.0.1/portal", { headers: { Cookie: cookie } }))).toMatchObject({ email, role: "customer", name: "Robin Hive" });

    const user = await db("users").where({ email }).first();
    expect(user).toMatchObject({ role: "customer", name: "Robin Hive", phone: "607 555 0142" });
    expect(await db("customers").where({ user_id: user!.id }).first()).toMatchObject({ name: "Robin Hive", email, phone: "607 555 0142" });
    expect(await db("audit_log").where({ entity_type: "user", entity_id: String(user!.id), action: "customer.sign_up" }).first()).toBeTruthy();
    expect(await verifyCredentials(db, email, PASSWORD)).toBe(String(user!.id));
    // Used, and the person's details (the password's hash among them) are not kept with it.
    expect(await db("sign_up_requests").where({ email }).first()).toMatchObject({ used_at: expect.any(Date), name: "", phone: null, password_hash: "" });

    const again = (await follow(token)) as Answer;
    expect(again.init.status).toBe(404);
    expect(again.data.outcome).toBe("invalid");
    expect(await userCount(email)).toBe(1);
  });

  it("makes one account when the same link is followed twice at once", async () => {
    const email = address("double");
    const token = await tokenFromInbox(email);
    const [first, second] = await Promise.all([follow(token), follow(token)]);
    const redirects = [first, second].filter((r) => r instanceof Response);
    const refused = [first, second].filter((r) => !(r instanceof Response)) as Answer[];
    expect(redirects).toHaveLength(1);
    expect(refused.map((r) => r.init.status)).toEqual([404]);
    expect(await userCount(email)).toBe(1);
  });

  it("refuses an expired link, an unknown one and a mangled one with a 404, and makes nothing", async () => {
    const email = address("late");
    const token = await tokenFromInbox(email);
    // As if the link had been sent 25 hours ago.
    await db("sign_up_requests")
      .where({ email })
      .update({ created_at: db.raw("now() - interval '25 hours'") as unknown as Date, expires_at: db.raw("now() - interval '1 hour'") as unknown as Date });
    for (const tried of [token, randomBytes(32).toString("base64url"), token.slice(0, 20), "not-a-token"]) {
      const refused = (await follow(tried)) as Answer;
      expect(refused.init.status, tried).toBe(404);
      expect(refused.data.outcome).toBe("invalid");
    }
    expect(await userCount(email)).toBe(0);
  });

  it("says to sign in when the address got an account after the link was sent", async () => {
    const email = address("meanwhile");
    const token = await tokenFromInbox(email);
    await createCustomerAccount(db, { name: "Robin Hive", email, password: "another good password" });
    const answer = (await follow(token)) as Answer;
    expect(answer.init.status).toBe(409);
    expect(answer.data.outcome).toBe("account-exists");
    expect(await userCount(email)).toBe(1);
  });
});
