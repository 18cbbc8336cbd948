import { randomBytes, randomUUID } from "node:crypto";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { describeAuditEntry } from "~/domain/audit-descriptions";
import { deliverEmail } from "~/models/emails.server";
import { saveBusinessSettings, loadBusinessSettings } from "~/models/settings.server";
import { changeStaffRole, deactivateStaff, invitationTokenHash, newInvitationToken } from "~/models/staff.server";
import { createSessionRecord } from "~/models/sessions.server";
import { createCustomerAccount, hashPassword } from "~/models/users.server";
import { action as inviteAction, loader as inviteLoader } from "~/routes/public/invite";
import { action as staffAction, loader as staffLoader } from "~/routes/office/staff";
import { authenticator, SignInError } from "~/services/auth.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { optionalUser } from "~/services/permissions.server";
import { withPeerAddress } from "~/services/sign-in-limits.server";
import { sessionStorage } from "~/services/session.server";
import { emailsTo, waitForEmail } from "./mail-sink";
import { resetDatabase } from "./reset-database";

// Staff accounts through the staff page's loader and action (as the owner would use them)
// and the invitation link's loader and action (as the invitee would), with the invitation
// e-mail going through the real local SMTP sink. The sink is shared with other test files,
// so every address here is unique to this run.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const run = randomUUID().slice(0, 8);
let serial = 0;
/** A fresh address for each use: the sink keeps e-mails from earlier tests and runs. */
const address = (name: string) => `${name}.${run}.${++serial}@example.test`;

const PASSWORD = "quiet walnut harbour drift";
const OLD_PASSWORD = "amber ferry lantern moss";

type StaffRoleName = "owner" | "dispatcher" | "office" | "crew";

async function aUser(role: StaffRoleName | "customer", name: string, password = OLD_PASSWORD): Promise<{ id: number; email: string }> {
  const email = address(role);
  const [user] = await db("users")
    .insert({ email, password_hash: await hashPassword(password), role, name })
    .returning("id");
  return { id: Number(user.id), email };
}

async function aCrew(name: string): Promise<number> {
  const [crew] = await db("crews")
    .insert({ name, start_label: "Depot", start_lat: 42.44, start_lng: -76.5, work_start: "08:00", work_end: "17:00", vaporizers: 2, active: true })
    .returning("id");
  return Number(crew.id);
}

let owner: { id: number; email: string };
beforeEach(async () => {
  await resetDatabase(db);
  owner = await aUser("owner", "Olive Owner");
  await saveBusinessSettings(db, { ...(await loadBusinessSettings(db)), businessName: "Finger Lakes Mite Control" }, owner.id);
});

/** What a route module threw or returned. */
async function outcome(call: () => unknown): Promise<unknown> {
  try {
    return await call();
  } catch (thrown) {
    return thrown;
  }
}

/** A signed-in session's cookie for the user, made the way sign-in makes one. */
async function cookieFor(userId: number): Promise<string> {
  const session = await sessionStorage().getSession();
  session.set("userId", String(userId));
  return (await sessionStorage().commitSession(session)).split(";")[0];
}

type Answer = { data: Record<string, unknown> & { ok?: boolean; errors?: Record<string, string>; message?: string }; init: { status: number } | null };

/** Posts the staff page's form as `userId`. */
async function staffPost(userId: number, fields: Record<string, string | number>): Promise<unknown> {
  const body = new URLSearchParams(Object.entries(fields).map(([k, v]) => [k, String(v)]));
  const request = new Request("http://127.0.0.1/office/staff", {
    method: "POST",
    headers: { Cookie: await cookieFor(userId), "Content-Type": "application/x-www-form-urlencoded" },
    body,
  });
  return outcome(() => staffAction({ request, params: {}, context: {} } as never));
}

async function staffPage(userId: number, search = "") {
  const request = new Request(`http://127.0.0.1/office/staff${search}`, { headers: { Cookie: await cookieFor(userId) } });
  return outcome(() => staffLoader({ request, params: {}, context: {} } as never));
}

function invite(fields: { name: string; email: string; role: StaffRoleName; crewId?: number | string }, as = owner.id) {
  return staffPost(as, { intent: "invite", name: fields.name, email: fields.email, role: fields.role, crewId: fields.crewId ?? "" });
}

function openLink(token: string) {
  return outcome(() => inviteLoader({ request: new Request(`http://127.0.0.1/invite/${token}`), params: { token }, context: {} } as never));
}

function acceptLink(token: string, password = PASSWORD, confirm = password) {
  const request = new Request(`http://127.0.0.1/invite/${token}`, {
    method: "POST",
    headers: { "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ password, confirm }),
  });
  return outcome(() => inviteAction({ request, params: { token }, context: {} } as never));
}

/** Sends every e-mail queued for `to` through SMTP now (the worker watches another database). */
async function deliverTo(to: string): Promise<number> {
  const rows = await db("email_log").where({ to_address: to, status: "queued" }).orderBy("id").select("id");
  for (const row of rows) expect(await deliverEmail(db, row.id)).toBe("sent");
  return rows.length;
}

const LINK = /\/invite\/([A-Za-z0-9_-]{43}\.[A-Za-z0-9_-]{43})(?![A-Za-z0-9_.-])/;

/** Invites `email` as the owner and returns the token from the link that reached the sink. */
async function tokenFromInbox(email: string, role: StaffRoleName = "office", crewId?: number): Promise<string> {
  const answer = await invite({ name: "Ivy Invitee", email, role, crewId });
  expect(answer, JSON.stringify(answer)).toMatchObject({ ok: true, intent: "invite" });
  expect(await deliverTo(email)).toBe(1);
  const message = await waitForEmail(email);
  const token = LINK.exec(message.text ?? "")?.[1];
  expect(token, message.text).toBeDefined();
  return token!;
}

async function userCount(email: string): Promise<number> {
  const row = await db("users").where({ email }).count<{ n: number }[]>("* as n").first();
  return Number(row?.n ?? 0);
}

async function auditRows(action: string) {
  return db("audit_log").where({ action }).orderBy("id");
}

function sentence(row: { action: string; entity_type: string; entity_id: string; before: unknown; after: unknown }) {
  return describeAuditEntry({ action: row.action, entityType: row.entity_type, entityId: row.entity_id, before: row.before, after: row.after });
}

/** Signs in through the real strategy (sign-in limits included); the user, or the SignInError. */
function signIn(email: string, password: string) {
  const request = new Request("http://127.0.0.1/sign-in", {
    method: "POST",
    headers: { "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ email, password }),
  });
  return withPeerAddress("203.0.113.80", () => authenticator.authenticate("form", request)).catch((error: unknown) => error);
}

describe("inviting staff", () => {
  it("e-mails a single-use link naming the business, the inviter and the role, and stores only the token's hash", async () => {
    const email = address("ivy");
    const token = await tokenFromInbox(email);

    const message = await waitForEmail(email);
    expect(message.subject).toBe("Olive Owner invited you to Finger Lakes Mite Control on Varroute");
    expect(message.text).toContain("Hello Ivy Invitee,");
    expect(message.text).toContain("Role: Office");
    expect(message.text).toContain("Business: Finger Lakes Mite Control");
    expect(message.text).toContain("Invited by: Olive Owner");
    expect(message.text).toContain("7 days");
    expect(message.html).toMatch(LINK);
    // The link is the app's address (APP_URL), not the request's.
    expect(message.text).toMatch(new RegExp(`https?://[^\\s/]+/invite/${token.replace(/[.\-]/g, "\\$&")}`));

    const stored = await db("staff_invitations").where({ email }).first();
    expect(stored).toMatchObject({ name: "Ivy Invitee", role: "office", invited_by: owner.id, accepted_at: null, revoked_at: null });
    expect(stored!.token_hash).toBe(invitationTokenHash(token));
    expect(JSON.stringify(stored)).not.toContain(token.split(".")[0]);
    expect(stored!.expires_at.getTime() - stored!.created_at.getTime()).toBe(7 * 24 * 60 * 60 * 1000);

    const [entry] = await auditRows("staff.invite");
    expect(entry).toMatchObject({ actor_user_id: owner.id, entity_type: "staff_invitation", entity_id: String(stored!.id) });
    expect(sentence(entry)).toBe(`Invited Ivy Invitee (${email}) to join the staff as office`);
  });

  it("refuses, at the e-mail field, an address that has an account or an open invitation, and sends nothing", async () => {
    const staff = await aUser("dispatcher", "Dee Spatcher");
    const customer = address("customer");
    await createCustomerAccount(db, { name: "Robin Hive", email: customer, password: OLD_PASSWORD });
    const invited = address("twice");
    await invite({ name: "Ivy Invitee", email: invited, role: "office" });

    const forStaff = (await invite({ name: "Dee Again", email: staff.email.toUpperCase(), role: "office" })) as Answer;
    expect(forStaff.init?.status).toBe(409);
    expect(forStaff.data.errors).toEqual({ email: "Dee Spatcher already has a staff account with this address (Dispatcher)." });
    expect(forStaff.data.values).toMatchObject({ name: "Dee Again", role: "office" });

    const forCustomer = (await invite({ name: "Robin Hive", email: customer, role: "office" })) as Answer;
    expect(forCustomer.init?.status).toBe(409);
    expect(forCustomer.data.errors?.email).toMatch(/customer account/);

    const again = (await invite({ name: "Ivy Invitee", email: invited, role: "crew" })) as Answer;
    expect(again.init?.status).toBe(409);
    expect(again.data.errors?.email).toMatch(/waiting already/);

    expect(await db("email_log").whereIn("to_address", [staff.email, customer]).count<{ n: number }[]>("* as n").first()).toEqual({ n: 0 });
    expect(await db("email_log").where({ to_address: invited }).count<{ n: number }[]>("* as n").first()).toEqual({ n: 1 });
    expect(await auditRows("staff.invite")).toHaveLength(1);
  });

  it("puts a bad name, e-mail, role or crew at its own field", async () => {
    const answer = (await staffPost(owner.id, { intent: "invite", name: "", email: "not an address", role: "customer", crewId: "" })) as Answer;
    expect(answer.init?.status).toBe(400);
    expect(Object.keys(answer.data.errors!).sort()).toEqual(["email", "name", "role"]);
    const retired = await aCrew("Old crew");
    await db("crews").where({ id: retired }).update({ active: false });
    const crew = (await invite({ name: "Cal Crew", email: address("cal"), role: "crew", crewId: retired })) as Answer;
    expect(crew.init?.status).toBe(409);
    expect(crew.data.errors).toEqual({ crewId: "Choose a crew from the list." });
    expect(await db("staff_invitations").count<{ n: number }[]>("* as n").first()).toEqual({ n: 0 });
  });
});

describe("the invitation link", () => {
  it("shows who invited whom to which business, then makes the account once, signs the person in and opens their home", async () => {
    const email = address("ivy");
    const token = await tokenFromInbox(email);

    const page = (await openLink(token)) as { invitation: Record<string, unknown> };
    expect(page.invitation).toMatchObject({ name: "Ivy Invitee", email, role: "office", invitedByName: "Olive Owner", businessName: "Finger Lakes Mite Control" });

    // The password rules, at their fields; nothing is made.
    const short = (await acceptLink(token, "short")) as Answer;
    expect(short.init?.status).toBe(400);
    expect(short.data.errors?.password).toMatch(/at least 10 characters/);
    const common = (await acceptLink(token, "password1234")) as Answer;
    expect(common.data.errors?.password).toMatch(/common passwords|easy to guess/);
    const ownName = (await acceptLink(token, "IvyInvitee-2026-hives")) as Answer;
    expect(ownName.data.errors?.password).toMatch(/name and e-mail/);
    const differ = (await acceptLink(token, PASSWORD, `${PASSWORD}!`)) as Answer;
    expect(differ.data.errors).toEqual({ confirm: "The two passwords differ." });
    expect(await userCount(email)).toBe(0);

    const response = await acceptLink(token);
    expect(response).toBeInstanceOf(Response);
    expect((response as Response).status).toBe(302);
    expect((response as Response).headers.get("Location")).toBe("/office");
    const cookie = (response as Response).headers.get("Set-Cookie")!.split(";")[0];
    expect(await optionalUser(new Request("http://127.0.0.1/office", { headers: { Cookie: cookie } }))).toMatchObject({ email, role: "office", name: "Ivy Invitee" });

    const user = await db("users").where({ email }).first();
    expect(await db("staff_invitations").where({ email }).first()).toMatchObject({ accepted_at: expect.any(Date) });
    const [entry] = await auditRows("staff.invite_accepted");
    expect(entry).toMatchObject({ actor_user_id: Number(user!.id), entity_type: "user", entity_id: String(user!.id) });
    expect(sentence(entry)).toBe("Accepted the staff invitation and joined as office");
    expect(await signIn(email, PASSWORD)).toMatchObject({ email, role: "office" });

    // Used: the link is a 404 now, for the page and for the form.
    for (const again of [await openLink(token), await acceptLink(token)]) {
      expect((again as Answer).init?.status).toBe(404);
      expect(String((again as Answer).data)).toMatch(/does not work/);
    }
    expect(await userCount(email)).toBe(1);
  });

  it("puts a crew member on the crew chosen at invitation and opens the crew's screen", async () => {
    const crewId = await aCrew("North crew");
    const email = address("cal");
    const token = await tokenFromInbox(email, "crew", crewId);
    expect(((await openLink(token)) as { invitation: Record<string, unknown> }).invitation).toMatchObject({ role: "crew", crewName: "North crew" });
    const response = (await acceptLink(token)) as Response;
    expect(response.headers.get("Location")).toBe("/crew");
    const user = await db("users").where({ email }).first();
    expect(await db("crew_members").where({ user_id: user!.id }).select("crew_id")).toEqual([{ crew_id: crewId }]);
  });

  it("makes one account when the same link is sent twice at once", async () => {
    const email = address("double");
    const token = await tokenFromInbox(email);
    const answers = await Promise.all([acceptLink(token), acceptLink(token)]);
    expect(answers.filter((a) => a instanceof Response)).toHaveLength(1);
    expect(answers.filter((a) => !(a instanceof Response)).map((a) => (a as Answer).init?.status)).toEqual([404]);
    expect(await userCount(email)).toBe(1);
    expect(await auditRows("staff.invite_accepted")).toHaveLength(1);
  });

  it("refuses an expired, a withdrawn, an unknown, a forged and a mangled link with a 404, and makes nothing", async () => {
    const late = address("late");
    const lateToken = await tokenFromInbox(late);
    await db("staff_invitations")
      .where({ email: late })
      .update({ created_at: db.raw("now() - interval '8 days'") as unknown as Date, expires_at: db.raw("now() - interval '1 day'") as unknown as Date });

    const withdrawn = address("withdrawn");
    const withdrawnToken = await tokenFromInbox(withdrawn);
    const invitation = await db("staff_invitations").where({ email: withdrawn }).first();
    expect(await staffPost(owner.id, { intent: "revoke", invitationId: invitation!.id })).toMatchObject({ ok: true, intent: "revoke" });
    const [revoked] = await auditRows("staff.invite_revoked");
    expect(revoked).toMatchObject({ actor_user_id: owner.id, entity_id: String(invitation!.id) });
    expect(sentence(revoked)).toBe(`Withdrew the staff invitation to ${withdrawn}`);

    // Signed with another secret: refused before any lookup.
    const forged = newInvitationToken("not the app's secret");
    const unknown = newInvitationToken();
    for (const tried of [lateToken, withdrawnToken, forged, unknown, lateToken.slice(0, 50), "not-a-token", `${randomBytes(32).toString("base64url")}`]) {
      for (const answer of [await openLink(tried), await acceptLink(tried)]) {
        expect((answer as Answer).init?.status, tried).toBe(404);
      }
    }
    expect(await userCount(late)).toBe(0);
    expect(await userCount(withdrawn)).toBe(0);
  });

  it("sends again with a new link that works, and the old link stops working", async () => {
    const email = address("resend");
    const oldToken = await tokenFromInbox(email);
    const invitation = await db("staff_invitations").where({ email }).first();
    expect(await staffPost(owner.id, { intent: "resend", invitationId: invitation!.id })).toMatchObject({ ok: true, intent: "resend" });
    expect(await deliverTo(email)).toBe(1);
    const tokens = (await emailsTo(email)).map((m) => LINK.exec(m.text ?? "")?.[1]);
    const newToken = tokens.find((t) => t && t !== oldToken)!;
    expect(newToken).toBeDefined();
    expect(((await openLink(oldToken)) as Answer).init?.status).toBe(404);
    expect((await acceptLink(newToken)) as Response).toBeInstanceOf(Response);
    const [entry] = await auditRows("staff.invite_resent");
    expect(entry).toMatchObject({ actor_user_id: owner.id, entity_id: String(invitation!.id) });
    expect(sentence(entry)).toBe(`Sent the staff invitation to ${email} again, with a new link`);
  });
});

describe("the staff page", () => {
  it("lists staff with their crew, state and last activity, and open invitations, filtered by role and status and sorted", async () => {
    const crewId = await aCrew("North crew");
    const cal = await aUser("crew", "Cal Crew");
    await db("crew_members").insert({ crew_id: crewId, user_id: cal.id });
    const otto = await aUser("office", "Otto Office");
    const ada = await aUser("office", "Ada Office");
    await db("users").where({ id: ada.id }).update({ disabled_at: new Date() });
    await aUser("customer", "Robin Hive");
    const seen = new Date("2026-11-20T14:00:00Z");
    await createSessionRecord(db, { userId: otto.id, expiresAt: new Date(Date.now() + 86_400_000), now: seen });
    await invite({ name: "Ivy Invitee", email: address("ivy"), role: "office" });

    const all = (await staffPage(owner.id)) as { rows: { name: string; kind: string; status: string; crewName: string | null; lastSeenAt: string | null }[]; total: number };
    expect(all.rows.map((r) => r.name)).toEqual(["Ada Office", "Cal Crew", "Ivy Invitee", "Olive Owner", "Otto Office"]);
    expect(all.rows.find((r) => r.name === "Cal Crew")).toMatchObject({ crewName: "North crew", status: "active" });
    expect(all.rows.find((r) => r.name === "Otto Office")).toMatchObject({ lastSeenAt: seen.toISOString() });
    expect(all.rows.find((r) => r.name === "Ivy Invitee")).toMatchObject({ kind: "invitation", status: "invited" });

    const offices = (await staffPage(owner.id, "?role=office&status=active")) as typeof all;
    expect(offices.rows.map((r) => r.name)).toEqual(["Otto Office"]);
    const invited = (await staffPage(owner.id, "?status=invited")) as typeof all;
    expect(invited.rows.map((r) => r.name)).toEqual(["Ivy Invitee"]);
    const deactivated = (await staffPage(owner.id, "?status=deactivated")) as typeof all;
    expect(deactivated.rows.map((r) => r.name)).toEqual(["Ada Office"]);
    const byRoleDesc = (await staffPage(owner.id, "?sort=role&dir=desc")) as typeof all;
    expect(byRoleDesc.rows.map((r) => r.name)).toEqual(["Cal Crew", "Ada Office", "Ivy Invitee", "Otto Office", "Olive Owner"]);
    // The owner's own session (this request's) is the latest; people never seen come last either way.
    const seenFirst = (await staffPage(owner.id, "?sort=lastSeen&dir=asc")) as typeof all;
    expect(seenFirst.rows.slice(0, 2).map((r) => r.name)).toEqual(["Otto Office", "Olive Owner"]);
    const seenLast = (await staffPage(owner.id, "?sort=lastSeen&dir=desc")) as typeof all;
    expect(seenLast.rows.slice(0, 2).map((r) => r.name)).toEqual(["Olive Owner", "Otto Office"]);
    expect(seenLast.rows.slice(2).every((r) => r.lastSeenAt === null)).toBe(true);
  });

  it("changes a role, and a crew member who takes another role leaves their crew", async () => {
    const crewId = await aCrew("North crew");
    const cal = await aUser("crew", "Cal Crew");
    await db("crew_members").insert({ crew_id: crewId, user_id: cal.id });
    const answer = await staffPost(owner.id, { intent: "role", userId: cal.id, role: "dispatcher" });
    expect(answer).toMatchObject({ ok: true, intent: "role", target: `user:${cal.id}` });
    expect(await db("users").where({ id: cal.id }).first("role")).toEqual({ role: "dispatcher" });
    expect(await db("crew_members").where({ user_id: cal.id })).toEqual([]);
    const [entry] = await auditRows("staff.role");
    expect(entry).toMatchObject({ actor_user_id: owner.id, entity_type: "user", entity_id: String(cal.id) });
    expect(sentence(entry)).toBe("Changed Cal Crew's role from crew to dispatcher");

    const customer = await aUser("customer", "Robin Hive");
    const refused = (await staffPost(owner.id, { intent: "role", userId: customer.id, role: "office" })) as Answer;
    expect(refused.init?.status).toBe(404);
    expect(await db("users").where({ id: customer.id }).first("role")).toEqual({ role: "customer" });
    const notStaffRole = (await staffPost(owner.id, { intent: "role", userId: cal.id, role: "customer" })) as Answer;
    expect(notStaffRole.init?.status).toBe(400);
    expect(await auditRows("staff.role")).toHaveLength(1);
  });

  it("deactivation ends the person's sessions at once and blocks sign-in; reactivation lets them sign in again", async () => {
    const otto = await aUser("office", "Otto Office");
    // Signed in on two devices before the deactivation.
    const cookie = await cookieFor(otto.id);
    const phone = await cookieFor(otto.id);
    const asOtto = (c = cookie) => optionalUser(new Request("http://127.0.0.1/office", { headers: { Cookie: c } }));
    expect(await asOtto()).toMatchObject({ email: otto.email, role: "office" });
    expect(await asOtto(phone)).toMatchObject({ email: otto.email, role: "office" });
    expect(await signIn(otto.email, OLD_PASSWORD)).toMatchObject({ email: otto.email });

    const answer = await staffPost(owner.id, { intent: "deactivate", userId: otto.id });
    expect(answer).toMatchObject({ ok: true, intent: "deactivate" });
    expect(await asOtto()).toBeNull();
    expect(await asOtto(phone)).toBeNull();
    expect(await db("sessions").where({ user_id: otto.id })).toEqual([]);
    const refused = await signIn(otto.email, OLD_PASSWORD);
    expect(refused).toBeInstanceOf(SignInError);
    // The owner's own session is untouched.
    expect(await db("sessions").where({ user_id: owner.id }).count<{ n: number }[]>("* as n").first()).not.toEqual({ n: 0 });
    const [entry] = await auditRows("staff.deactivate");
    expect(entry).toMatchObject({ actor_user_id: owner.id, entity_type: "user", entity_id: String(otto.id) });
    expect(sentence(entry)).toBe("Deactivated Otto Office's account and signed them out of 2 sessions");

    expect(await staffPost(owner.id, { intent: "reactivate", userId: otto.id })).toMatchObject({ ok: true, intent: "reactivate" });
    expect(await signIn(otto.email, OLD_PASSWORD)).toMatchObject({ email: otto.email });
    const [back] = await auditRows("staff.reactivate");
    expect(sentence(back)).toBe("Reactivated Otto Office's account");
  });

  it("keeps the last active owner: not deactivated, not given another role, not even by themselves", async () => {
    const ownRole = (await staffPost(owner.id, { intent: "role", userId: owner.id, role: "office" })) as Answer;
    expect(ownRole.init?.status).toBe(409);
    expect(ownRole.data.errors?.role).toMatch(/only active owner/);
    // Another owner who is deactivated does not count.
    const former = await aUser("owner", "Former Owner");
    await db("users").where({ id: former.id }).update({ disabled_at: new Date() });
    await expect(deactivateStaff(db, { actorUserId: former.id, userId: owner.id })).rejects.toThrow(/only active owner/);
    await expect(changeStaffRole(db, { actorUserId: former.id, userId: owner.id, role: "dispatcher" })).rejects.toThrow(/only active owner/);
    expect(await db("users").where({ id: owner.id }).first("role", "disabled_at")).toEqual({ role: "owner", disabled_at: null });
    expect(await auditRows("staff.role")).toEqual([]);
    expect(await auditRows("staff.deactivate")).toEqual([]);

    // With a second active owner, the owner may step down, and lands on their new home.
    const second = await aUser("owner", "Sam Second");
    const stepDown = (await staffPost(owner.id, { intent: "role", userId: owner.id, role: "office" })) as Response;
    expect(stepDown).toBeInstanceOf(Response);
    expect(stepDown.headers.get("Location")).toBe("/office");
    const last = (await staffPost(second.id, { intent: "deactivate", userId: owner.id })) as Answer;
    expect(last).toMatchObject({ ok: true });
    const selfDeactivate = (await staffPost(second.id, { intent: "deactivate", userId: second.id })) as Answer;
    expect(selfDeactivate.init?.status).toBe(409);
  });

  it("keeps one owner when two owners demote or deactivate each other at the same moment", async () => {
    for (let round = 0; round < 3; round++) {
      await resetDatabase(db);
      const a = await aUser("owner", "Ann Owner");
      const b = await aUser("owner", "Ben Owner");
      const answers = await Promise.all([
        staffPost(a.id, { intent: "role", userId: b.id, role: "dispatcher" }),
        staffPost(b.id, { intent: "role", userId: a.id, role: "dispatcher" }),
      ]);
      expect(answers.filter((x) => (x as ActionOk).ok === true)).toHaveLength(1);
      // The loser is refused by the rule, or, when the winner committed before its request
      // was authorised, as no longer an owner.
      expect([409, 403]).toContain(answers.map((x) => (x as Answer).init?.status).find((status) => status !== undefined));
      expect(await db("users").where({ role: "owner" }).whereNull("disabled_at").count<{ n: number }[]>("* as n").first()).toEqual({ n: 1 });

      // The model alone, without the page's role check in front.
      await db("users").whereIn("id", [a.id, b.id]).update({ role: "owner" });
      const demotions = await Promise.all([
        changeStaffRole(db, { actorUserId: a.id, userId: b.id, role: "office" }).catch((e: Error) => e),
        changeStaffRole(db, { actorUserId: b.id, userId: a.id, role: "office" }).catch((e: Error) => e),
      ]);
      expect(demotions.filter((r) => r instanceof Error).map((e) => (e as Error).message)).toEqual([expect.stringMatching(/only active owner/)]);
      expect(await db("users").where({ role: "owner" }).whereNull("disabled_at").count<{ n: number }[]>("* as n").first()).toEqual({ n: 1 });

      await db("users").whereIn("id", [a.id, b.id]).update({ role: "owner" });
      const [x, y] = await Promise.all([deactivateStaff(db, { actorUserId: a.id, userId: b.id }).catch((e: Error) => e), deactivateStaff(db, { actorUserId: b.id, userId: a.id }).catch((e: Error) => e)]);
      expect([x, y].filter((r) => r instanceof Error)).toHaveLength(1);
      expect(await db("users").where({ role: "owner" }).whereNull("disabled_at").count<{ n: number }[]>("* as n").first()).toEqual({ n: 1 });
    }
  });

  it("is the owner's alone: office, dispatcher and crew are refused (403) by the page and every action", async () => {
    const others = [await aUser("office", "Otto Office"), await aUser("dispatcher", "Dee Spatcher"), await aUser("crew", "Cal Crew")];
    const victim = await aUser("office", "Ada Office");
    const email = address("sneaky");
    for (const other of others) {
      expect(((await staffPage(other.id)) as Answer).init?.status).toBe(403);
      const attempts: Record<string, string | number>[] = [
        { intent: "invite", name: "Sneaky Pete", email, role: "owner", crewId: "" },
        { intent: "role", userId: victim.id, role: "owner" },
        { intent: "deactivate", userId: victim.id },
        { intent: "reactivate", userId: victim.id },
        { intent: "resend", invitationId: 1 },
        { intent: "revoke", invitationId: 1 },
      ];
      for (const fields of attempts) {
        expect(((await staffPost(other.id, fields)) as Answer).init?.status, `${fields.intent} as ${other.email}`).toBe(403);
      }
    }
    expect(await db("staff_invitations").count<{ n: number }[]>("* as n").first()).toEqual({ n: 0 });
    expect(await db("users").where({ id: victim.id }).first("role", "disabled_at")).toEqual({ role: "office", disabled_at: null });
    expect(await db("audit_log").where("action", "like", "staff.%")).toEqual([]);
    // Signed out: to sign-in.
    const anonymous = (await outcome(() =>
      staffAction({ request: new Request("http://127.0.0.1/office/staff", { method: "POST", headers: { "Content-Type": "application/x-www-form-urlencoded" }, body: "intent=deactivate&userId=1" }), params: {}, context: {} } as never),
    )) as Response;
    expect(anonymous.status).toBe(302);
    expect(anonymous.headers.get("Location")).toMatch(/^\/sign-in/);
  });
});

type ActionOk = { ok: boolean };
