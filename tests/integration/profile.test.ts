import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { describeAuditEntry } from "~/domain/audit-descriptions";
import { createCustomerAccount, hashPassword, verifyCredentials } from "~/models/users.server";
import { loader as emailLinkLoader } from "~/routes/profile-email";
import { action as profileAction, loader as profileLoader } from "~/routes/profile";
import { action as signInAction } from "~/routes/public/sign-in";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { address, count, deliverTo, NEW_PASSWORD, outcome, PASSWORD, post, whoIs } from "./account-fixtures";
import { waitForEmail } from "./mail-sink";
import { resetDatabase } from "./reset-database";

// The profile page through its loader and action, signed in through the sign-in page, and
// the e-mailed link to a new address through its loader. E-mails go through the real local
// SMTP sink (mail-sink.ts), so every address is unique to this run.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

async function signIn(email: string, password = PASSWORD): Promise<string> {
  const response = await outcome(() => signInAction({ request: post("/sign-in", { email, password }), params: {}, context: {} } as never));
  expect(response).toBeInstanceOf(Response);
  expect((response as Response).status).toBe(302);
  return (response as Response).headers.get("Set-Cookie")!.split(";")[0];
}

type Answer = { intent: string | null; errors: Record<string, string>; done?: string; values?: Record<string, string> };
type Refusal = { data: Answer; init: { status: number } };

function profile(cookie: string, fields: Record<string, string>) {
  return outcome(() => profileAction({ request: post("/profile", fields, cookie), params: {}, context: {} } as never));
}

function openProfile(cookie?: string) {
  const request = new Request("http://127.0.0.1/profile", { headers: cookie ? { Cookie: cookie } : {} });
  return outcome(() => profileLoader({ request, params: {}, context: {} } as never));
}

function followEmailLink(token: string, cookie?: string) {
  const request = new Request(`http://127.0.0.1/profile/email/${token}`, { headers: cookie ? { Cookie: cookie } : {} });
  return outcome(() => emailLinkLoader({ request, params: { token }, context: {} } as never));
}

async function customer(name = "Robin Hive") {
  const email = address(name.split(" ")[0].toLowerCase());
  const id = await createCustomerAccount(db, { name, email, password: PASSWORD, phone: "607 555 0142" });
  return { id, email, name };
}

async function staff(role: "crew" | "office" | "dispatcher" | "owner", name: string) {
  const email = address(role);
  const [user] = await db("users").insert({ email, password_hash: await hashPassword(PASSWORD), role, name }).returning("id");
  return { id: String(user.id), email, name };
}

const EMAIL_LINK = /\/profile\/email\/([A-Za-z0-9_-]{43})\b/;

describe("the profile page", () => {
  it("shows every signed-in person their name, e-mail and role, and sends a visitor to sign in", async () => {
    const crew = await staff("crew", "Casey Smoke");
    const cookie = await signIn(crew.email);
    expect(await openProfile(cookie)).toMatchObject({ profile: { name: "Casey Smoke", email: crew.email, role: "crew", phone: null, pendingEmail: null } });
    const visitor = await openProfile();
    expect(visitor).toBeInstanceOf(Response);
    expect((visitor as Response).headers.get("Location")).toBe("/sign-in?redirectTo=%2Fprofile");
  });

  it("saves the name and phone, on a customer's customer record too, with an audit entry", async () => {
    const robin = await customer();
    const cookie = await signIn(robin.email);
    const saved = (await profile(cookie, { intent: "details", name: "  Robin Comb-Hive ", phone: "607 555 0199" })) as Answer;
    expect(saved).toMatchObject({ intent: "details", errors: {}, done: "Your details are saved." });
    expect(await db("users").where({ id: Number(robin.id) }).first("name", "phone")).toEqual({ name: "Robin Comb-Hive", phone: "607 555 0199" });
    expect(await db("customers").where({ user_id: Number(robin.id) }).first("name", "phone")).toEqual({ name: "Robin Comb-Hive", phone: "607 555 0199" });

    const audit = await db("audit_log").where({ action: "user.profile", entity_id: robin.id }).select("*");
    expect(audit).toHaveLength(1);
    expect(audit[0]).toMatchObject({ actor_user_id: Number(robin.id), before: { name: "Robin Hive", phone: "607 555 0142" }, after: { name: "Robin Comb-Hive", phone: "607 555 0199" } });
    expect(describeAuditEntry({ action: "user.profile", entityType: "user", entityId: robin.id, before: audit[0].before, after: audit[0].after })).toBe(
      "Changed their name and phone number on their profile",
    );

    // Saving the same again is no change, and leaves no entry.
    await profile(cookie, { intent: "details", name: "Robin Comb-Hive", phone: "607 555 0199" });
    expect(await count("audit_log", { action: "user.profile" })).toBe(1);

    const refused = (await profile(cookie, { intent: "details", name: "R", phone: "call me" })) as Refusal;
    expect(refused.init.status).toBe(400);
    expect(refused.data.errors).toEqual({ name: "Enter your name.", phone: "Use digits, spaces and + ( ) - only." });
    expect(refused.data.values).toEqual({ name: "R", phone: "call me" });
  });

  it("answers a post that names none of its forms with 400", async () => {
    const robin = await customer();
    const cookie = await signIn(robin.email);
    const refused = (await profile(cookie, { intent: "delete-everything" })) as Refusal;
    expect(refused.init.status).toBe(400);
    expect(refused.data.errors.form).toBeTruthy();
  });
});

describe("changing the password", () => {
  it("ends every other session, keeps the current one, and e-mails a notice", async () => {
    const office = await staff("office", "Priya Ledger");
    const here = await signIn(office.email);
    const phone = await signIn(office.email);
    const tablet = await signIn(office.email);

    const changed = (await profile(here, { intent: "password", currentPassword: PASSWORD, password: NEW_PASSWORD, confirm: NEW_PASSWORD })) as Answer;
    expect(changed).toMatchObject({ intent: "password", errors: {} });
    expect(changed.done).toBe("Your password is changed. You were signed out on 2 other devices.");

    expect(await whoIs(here)).toMatchObject({ id: office.id });
    expect(await whoIs(phone)).toBeNull();
    expect(await whoIs(tablet)).toBeNull();
    expect(await count("sessions", { user_id: Number(office.id) })).toBe(1);
    expect(await verifyCredentials(db, office.email, NEW_PASSWORD)).toBe(office.id);
    expect(await verifyCredentials(db, office.email, PASSWORD)).toBeNull();

    const audit = await db("audit_log").where({ action: "user.password_change", entity_id: office.id }).first();
    expect(audit).toMatchObject({ actor_user_id: Number(office.id), after: { otherSessionsEnded: 2 } });
    expect(JSON.stringify(audit)).not.toContain(NEW_PASSWORD);

    expect(await deliverTo(office.email)).toBe(1);
    const notice = await waitForEmail(office.email, (m) => m.subject === "Your Varroute password was changed");
    expect(notice.text).toContain("Hello Priya Ledger,");
    expect(notice.text).toContain("profile page");
    // Staff get the crew's wording of the cautions, not the customer's.
    expect(notice.text).toContain("Before every dose:");
  });

  it("refuses a wrong current password at its field, and changes nothing", async () => {
    const robin = await customer();
    const here = await signIn(robin.email);
    const phone = await signIn(robin.email);
    const refused = (await profile(here, { intent: "password", currentPassword: "not my password", password: NEW_PASSWORD, confirm: NEW_PASSWORD })) as Refusal;
    expect(refused.init.status).toBe(400);
    expect(refused.data.errors).toEqual({ currentPassword: "That is not your current password." });
    expect(await verifyCredentials(db, robin.email, PASSWORD)).toBe(robin.id);
    expect(await whoIs(phone)).toMatchObject({ id: robin.id });
    expect(await count("email_log", { to_address: robin.email, kind: "password_changed" })).toBe(0);
    expect(await count("audit_log", { action: "user.password_change" })).toBe(0);
    // The wrong try counts like a failed sign-in.
    const failures = await db("sign_in_failures").where("key", "like", "%:email:%").count<{ n: number }[]>("* as n").first();
    expect(Number(failures?.n)).toBe(1);
  });

  it("refuses a weak, a mismatched or an unchanged new password at its field", async () => {
    const robin = await customer();
    const here = await signIn(robin.email);
    const weak = (await profile(here, { intent: "password", currentPassword: PASSWORD, password: "password123", confirm: "password123" })) as Refusal;
    expect(weak.data.errors.password).toMatch(/common passwords/);
    const differ = (await profile(here, { intent: "password", currentPassword: PASSWORD, password: NEW_PASSWORD, confirm: "something else entirely" })) as Refusal;
    expect(differ.data.errors.confirm).toBe("The two passwords differ.");
    const same = (await profile(here, { intent: "password", currentPassword: PASSWORD, password: PASSWORD, confirm: PASSWORD })) as Refusal;
    expect(same.data.errors.password).toBe("Choose a password different from the current one.");
    expect(await verifyCredentials(db, robin.email, PASSWORD)).toBe(robin.id);
  });
});

describe("changing the e-mail address", () => {
  it("changes it only when the link e-mailed to the new address is followed, once, and tells the old address", async () => {
    const robin = await customer();
    const newEmail = address("robin-new");
    const cookie = await signIn(robin.email);

    const asked = (await profile(cookie, { intent: "email", newEmail: newEmail.toUpperCase(), currentPassword: PASSWORD })) as Answer;
    expect(asked).toMatchObject({ intent: "email", errors: {} });
    expect(asked.done).toContain(newEmail);
    // Nothing changes yet.
    expect(await db("users").where({ id: Number(robin.id) }).first("email")).toEqual({ email: robin.email });
    expect(await openProfile(cookie)).toMatchObject({ profile: { email: robin.email, pendingEmail: newEmail } });

    expect(await deliverTo(newEmail)).toBe(1);
    expect(await deliverTo(robin.email)).toBe(1);
    const confirm = await waitForEmail(newEmail, (m) => m.subject === "Confirm your new e-mail address for Varroute");
    const token = EMAIL_LINK.exec(confirm.text ?? "")?.[1];
    expect(token, confirm.text).toBeDefined();
    expect(confirm.html).toContain(`/profile/email/${token}`);
    const notice = await waitForEmail(robin.email, (m) => m.subject === "A new e-mail address was requested for your Varroute account");
    expect(notice.text).toContain(newEmail);
    expect(notice.text).not.toMatch(EMAIL_LINK);
    expect(JSON.stringify(await db("email_changes").select("*"))).not.toContain(token);

    expect(await followEmailLink(token!, cookie)).toEqual({ outcome: "changed", newEmail, signedIn: true });
    expect(await db("users").where({ id: Number(robin.id) }).first("email")).toEqual({ email: newEmail });
    expect(await db("customers").where({ user_id: Number(robin.id) }).first("email")).toEqual({ email: newEmail });
    const audit = await db("audit_log").where({ action: "user.email_change", entity_id: robin.id }).first();
    expect(audit).toMatchObject({ actor_user_id: Number(robin.id), before: { email: robin.email }, after: { email: newEmail } });

    const again = (await followEmailLink(token!)) as { data: { outcome: string }; init: { status: number } };
    expect(again.init.status).toBe(404);
    expect(again.data.outcome).toBe("invalid");
    expect(await count("audit_log", { action: "user.email_change" })).toBe(1);

    // The new address signs in; the old one no longer does.
    expect(await signIn(newEmail)).toMatch(/^__varroute=/);
    expect(await verifyCredentials(db, robin.email, PASSWORD)).toBeNull();
  });

  it("refuses an address in use, the same address and a wrong password at their fields, and e-mails nothing", async () => {
    const robin = await customer();
    const sam = await customer("Sam Comb");
    const cookie = await signIn(robin.email);

    const taken = (await profile(cookie, { intent: "email", newEmail: sam.email, currentPassword: PASSWORD })) as Refusal;
    expect(taken.data.errors).toEqual({ newEmail: "This address cannot be used for your account. Choose another one." });
    expect(taken.data.values).toEqual({ newEmail: sam.email });
    const same = (await profile(cookie, { intent: "email", newEmail: robin.email, currentPassword: PASSWORD })) as Refusal;
    expect(same.data.errors).toEqual({ newEmail: "This is your e-mail address already." });
    // A wrong password is refused before anything about the address is said.
    const wrong = (await profile(cookie, { intent: "email", newEmail: sam.email, currentPassword: "not my password" })) as Refusal;
    expect(wrong.init.status).toBe(400);
    expect(wrong.data.errors).toEqual({ currentPassword: "That is not your current password." });
    const malformed = (await profile(cookie, { intent: "email", newEmail: "robin at home", currentPassword: PASSWORD })) as Refusal;
    expect(malformed.data.errors).toEqual({ newEmail: "Enter a valid e-mail address." });

    expect(await count("email_log", { kind: "email_change_confirm" })).toBe(0);
    expect(await count("email_log", { kind: "email_change_notice" })).toBe(0);
    expect(await count("email_changes")).toBe(0);
  });

  it("keeps only the newest link working, refuses an expired one, and sends at most 3 links an hour", async () => {
    const robin = await customer();
    const cookie = await signIn(robin.email);
    const first = address("first");
    const second = address("second");
    await profile(cookie, { intent: "email", newEmail: first, currentPassword: PASSWORD });
    await profile(cookie, { intent: "email", newEmail: second, currentPassword: PASSWORD });
    const tokenFor = async (to: string) => EMAIL_LINK.exec((await db("email_log").where({ to_address: to }).first("text_body"))?.text_body ?? "")![1];
    const [firstToken, secondToken] = [await tokenFor(first), await tokenFor(second)];

    expect(((await followEmailLink(firstToken)) as { init: { status: number } }).init.status).toBe(404);
    await db("email_changes").update({ expires_at: db.raw("now() - interval '1 minute'") as unknown as Date, created_at: db.raw("now() - interval '25 hours'") as unknown as Date });
    expect(((await followEmailLink(secondToken)) as { init: { status: number } }).init.status).toBe(404);
    expect(await db("users").where({ id: Number(robin.id) }).first("email")).toEqual({ email: robin.email });

    // The two above are now more than an hour old: three more may go, not a fourth.
    for (let i = 0; i < 3; i++) expect(await profile(cookie, { intent: "email", newEmail: address("again"), currentPassword: PASSWORD })).toMatchObject({ errors: {} });
    const refused = (await profile(cookie, { intent: "email", newEmail: address("again"), currentPassword: PASSWORD })) as Refusal;
    expect(refused.init.status).toBe(429);
    expect(refused.data.errors.newEmail).toMatch(/3 links in the last hour/);
    expect(await count("email_changes")).toBe(5);
  });

  it("says so when another account took the address before the link was followed", async () => {
    const robin = await customer();
    const cookie = await signIn(robin.email);
    const wanted = address("wanted");
    await profile(cookie, { intent: "email", newEmail: wanted, currentPassword: PASSWORD });
    const token = EMAIL_LINK.exec((await db("email_log").where({ to_address: wanted }).first("text_body"))?.text_body ?? "")![1];
    await createCustomerAccount(db, { name: "Quick Sam", email: wanted, password: "another good password" });
    const answer = (await followEmailLink(token)) as { data: { outcome: string }; init: { status: number } };
    expect(answer.init.status).toBe(409);
    expect(answer.data.outcome).toBe("taken");
    expect(await db("users").where({ id: Number(robin.id) }).first("email")).toEqual({ email: robin.email });
  });
});
