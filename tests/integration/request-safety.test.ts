import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { action as crewSyncAction } from "~/routes/api/crew-sync";
import { loader as attachmentLoader } from "~/routes/api/attachment";
import { loader as capacityLoader } from "~/routes/api/capacity";
import { loader as runGpxLoader } from "~/routes/api/run-gpx";
import { loader as runIcsLoader } from "~/routes/api/run-ics";
import { loader as visitsApiLoader } from "~/routes/api/visits";
import { loader as crewRunLoader } from "~/routes/crew/run";
import { action as dayAction, loader as dayLoader } from "~/routes/dispatch/day";
import { action as settingsAction } from "~/routes/dispatch/settings";
import { action as visitAction, loader as visitLoader } from "~/routes/dispatch/visit";
import { loader as dispatchYardLoader } from "~/routes/dispatch/yard";
import { action as customerImportAction } from "~/routes/office/customers-import";
import { loader as officeInvoiceLoader } from "~/routes/office/invoice";
import { loader as officeInvoicePdfLoader } from "~/routes/office/invoice-pdf";
import { loader as officeInvoicesLoader } from "~/routes/office/invoices";
import { action as bookAction } from "~/routes/portal/book";
import { loader as portalInvoiceLoader } from "~/routes/portal/invoice";
import { loader as portalVisitReportLoader } from "~/routes/portal/visit-report";
import { loader as portalYardLoader } from "~/routes/portal/yard";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { serverEnv } from "~/services/env.server";
import { stopJobs } from "~/services/jobs.server";
import { createUserSession } from "~/services/session.server";
import { ALL_SAFE, aCrew, aKey, aStop, rowCounts, type TestCrew, type TestStop } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

// What a route answers when the request is not what it expects: a post from another site,
// a body of the wrong type, a date that does not exist, an id no row could have. Each used
// to be written, or to end in a 500; each must now be a 4xx with a message, and change nothing.

const ORIGIN = "http://localhost";
const TOO_BIG_ID = "99999999999999999999"; // past PostgreSQL's bigint (9223372036854775807)
const NOT_A_DATE = "2027-02-30";

let crew: TestCrew;
let stop: TestStop;
const users = { dispatcher: 0, owner: 0, office: 0, customer: 0 };
const cookies: Record<string, string> = {};

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

/** The session cookie createUserSession sets for `userId` (its redirect carries it). */
async function cookieFor(userId: number): Promise<string> {
  try {
    await createUserSession(new Request(`${ORIGIN}/sign-in`, { method: "POST" }), String(userId), "/");
  } catch (thrown) {
    if (thrown instanceof Response) {
      const setCookie = thrown.headers.get("Set-Cookie");
      if (setCookie) return setCookie.split(";")[0];
    }
    throw thrown;
  }
  throw new Error("createUserSession did not redirect");
}

async function aUser(role: "dispatcher" | "owner" | "office" | "customer") {
  const email = `${role}.${Math.random().toString(36).slice(2, 8)}@example.test`;
  const [user] = await db("users").insert({ email, password_hash: "x", role, name: `A ${role}` }).returning("id");
  if (role === "customer") await db("customers").insert({ user_id: user.id, name: "Ada Apiary", email });
  return Number(user.id);
}

beforeAll(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew North");
  stop = await aStop(db, crew, { date: addCalendarDays(dateInZone(new Date(), defaultBusinessSettings.timeZone), 3), colonies: 2 });
  for (const role of Object.keys(users) as (keyof typeof users)[]) users[role] = await aUser(role);
  for (const [role, id] of Object.entries({ ...users, crew: crew.members[0].id })) cookies[role] = await cookieFor(id);
});

type Outcome = { status: number; body: unknown; headers?: Headers };

/** What the route answered: status and body, whether it returned or threw a Response or data(). */
async function outcome(call: () => Promise<unknown>): Promise<Outcome> {
  const read = async (value: unknown): Promise<Outcome> => {
    if (value instanceof Response) {
      const text = await value.text();
      let body: unknown = text;
      try {
        body = JSON.parse(text);
      } catch {
        // not JSON: keep the text
      }
      return { status: value.status, body, headers: value.headers };
    }
    if (value && typeof value === "object" && (value as { type?: string }).type === "DataWithResponseInit") {
      const d = value as { data: unknown; init: { status?: number } | null };
      return { status: d.init?.status ?? 200, body: d.data };
    }
    return { status: 200, body: value };
  };
  try {
    return await read(await call());
  } catch (thrown) {
    if (thrown instanceof Response || (thrown && typeof thrown === "object" && (thrown as { type?: string }).type === "DataWithResponseInit")) return read(thrown);
    throw thrown;
  }
}

type RouteFn = (args: never) => unknown;
function call(fn: RouteFn, request: Request, params: Record<string, string> = {}) {
  return outcome(async () => fn({ request, params, context: {} } as never));
}

function get(path: string, role: string) {
  return new Request(`${ORIGIN}${path}`, { headers: { Cookie: cookies[role] } });
}

function post(path: string, role: string, body: BodyInit, headers: Record<string, string> = {}, base = ORIGIN) {
  return new Request(`${base}${path}`, { method: "POST", body, headers: { Cookie: cookies[role], ...headers } });
}

/** A batch the phone would send: the run's safety check, which writes an applied change. */
function safetyBatch() {
  return JSON.stringify({
    changes: [{ key: aKey("safety"), kind: "safety", runId: stop.runId, runVersion: 1, createdAt: new Date().toISOString(), payload: { runId: stop.runId, items: ALL_SAFE } }],
  });
}

const messageOf = (body: unknown) => String((body as { error?: string; message?: string }).error ?? (body as { message?: string }).message ?? body);

describe("the crew's sync address", () => {
  it("refuses a post from another site with 403 and writes nothing", async () => {
    const before = await rowCounts(db);
    const answer = await call(crewSyncAction, post("/api/crew/sync", "crew", safetyBatch(), { Origin: "https://evil.example", "Content-Type": "application/json" }));
    expect(answer.status).toBe(403);
    expect(answer.headers?.get("Content-Type")).toMatch(/application\/json/);
    expect(messageOf(answer.body)).toMatch(/another site|origin/i);
    expect(await rowCounts(db)).toEqual(before);
    expect((await db("runs").where({ id: stop.runId }).first())?.safety_checked_at).toBeNull();
  });

  it("refuses an Origin of null (a sandboxed page or a data: URL) with 403", async () => {
    const answer = await call(crewSyncAction, post("/api/crew/sync", "crew", safetyBatch(), { Origin: "null", "Content-Type": "application/json" }));
    expect(answer.status).toBe(403);
  });

  it("refuses JSON sent as text/plain (what a cross-site form can send) with 415 and writes nothing", async () => {
    const before = await rowCounts(db);
    const answer = await call(crewSyncAction, post("/api/crew/sync", "crew", safetyBatch(), { Origin: ORIGIN, "Content-Type": "text/plain;charset=UTF-8" }));
    expect(answer.status).toBe(415);
    expect(answer.headers?.get("Content-Type")).toMatch(/application\/json/);
    expect(messageOf(answer.body)).toMatch(/application\/json/);
    expect(await rowCounts(db)).toEqual(before);
  });

  it("answers 400 to a body that is not JSON", async () => {
    const answer = await call(crewSyncAction, post("/api/crew/sync", "crew", "{changes: [", { Origin: ORIGIN, "Content-Type": "application/json" }));
    expect(answer.status).toBe(400);
    expect(messageOf(answer.body)).toMatch(/JSON/);
  });

  it("accepts the phone's own post (same origin, application/json), and one with no Origin header", async () => {
    const answer = await call(crewSyncAction, post("/api/crew/sync", "crew", safetyBatch(), { Origin: ORIGIN, "Content-Type": "application/json; charset=utf-8" }));
    expect(answer.status).toBe(200);
    expect((answer.body as { results: { status: string }[] }).results.map((r) => r.status)).toEqual(["applied"]);
    const noOrigin = await call(crewSyncAction, post("/api/crew/sync", "crew", safetyBatch(), { "Content-Type": "application/json" }));
    expect(noOrigin.status).toBe(200);
  });

  it("accepts the origin of APP_URL when the server sees another host (behind a proxy)", async () => {
    const appOrigin = new URL(serverEnv().APP_URL).origin;
    const answer = await call(
      crewSyncAction,
      post("/api/crew/sync", "crew", safetyBatch(), { Origin: appOrigin, "Content-Type": "application/json" }, "http://internal.invalid:8080"),
    );
    expect(answer.status).toBe(200);
  });
});

describe("form actions sent something that is not a form", () => {
  const json = JSON.stringify({ intent: "plan", yardIds: ["1"], serviceDate: "2027-03-01" });
  const jsonHeaders = { Origin: ORIGIN, "Content-Type": "application/json" };

  it("portal booking: 400 with a message, nothing booked", async () => {
    const before = Number(((await db("bookings").first(db.raw("count(*)::int as n"))) as unknown as { n: number }).n);
    const answer = await call(bookAction, post("/portal/book", "customer", json, jsonHeaders));
    expect(answer.status).toBe(400);
    expect(messageOf(answer.body)).toMatch(/takes a form/);
    expect(Number(((await db("bookings").first(db.raw("count(*)::int as n"))) as unknown as { n: number }).n)).toBe(before);
  });

  it("dispatch settings: 400 for the owner and for a dispatcher", async () => {
    for (const role of ["owner", "dispatcher"]) {
      const answer = await call(settingsAction, post("/dispatch/settings", role, JSON.stringify({ intent: "save" }), jsonHeaders));
      expect(answer.status, role).toBe(400);
      expect(messageOf(answer.body), role).toMatch(/takes a form/);
    }
  });

  it("dispatch settings: a dispatcher's form is still refused with 403 (only the owner changes settings)", async () => {
    const answer = await call(settingsAction, post("/dispatch/settings", "dispatcher", new URLSearchParams({ businessName: "Mine now" })));
    expect(answer.status).toBe(403);
  });

  it("day plan and visit actions: 400 for text", async () => {
    const day = await call(dayAction, post("/dispatch/days/2027-02-01", "dispatcher", "intent=plan", { "Content-Type": "text/plain" }), {
      date: "2027-02-01",
    });
    expect(day.status).toBe(400);
    const visit = await call(visitAction, post(`/dispatch/visits/${stop.visitId}`, "dispatcher", "intent=cancel&reason=x", { "Content-Type": "text/plain" }), {
      visitId: String(stop.visitId),
    });
    expect(visit.status).toBe(400);
    expect((await db("visits").where({ id: stop.visitId }).first())?.status).toBe("scheduled");
  });

  it("customer import: malformed multipart and JSON answer 400", async () => {
    const broken = await call(
      customerImportAction,
      post("/office/customers/import", "office", "this is not multipart at all", { "Content-Type": "multipart/form-data; boundary=----nothing-here" }),
    );
    expect(broken.status).toBe(400);
    const noBoundary = await call(customerImportAction, post("/office/customers/import", "office", "--x\r\n\r\n", { "Content-Type": "multipart/form-data" }));
    expect(noBoundary.status).toBe(400);
    const json = await call(customerImportAction, post("/office/customers/import", "office", "{}", { "Content-Type": "application/json" }));
    expect(json.status).toBe(400);
    expect(messageOf(json.body)).toMatch(/takes a form/);
  });
});

describe("dates that do not exist", () => {
  it(`/dispatch/days/${NOT_A_DATE} and /crew/runs/${NOT_A_DATE} answer 404`, async () => {
    const day = await call(dayLoader, get(`/dispatch/days/${NOT_A_DATE}`, "dispatcher"), { date: NOT_A_DATE });
    expect(day.status).toBe(404);
    expect(messageOf(day.body)).toMatch(/not a date on the calendar/);
    const dayPost = await call(dayAction, post(`/dispatch/days/${NOT_A_DATE}`, "dispatcher", new URLSearchParams({ intent: "plan" })), { date: NOT_A_DATE });
    expect(dayPost.status).toBe(404);
    for (const date of [NOT_A_DATE, "2027-13-01", "27-03-01"]) {
      const run = await call(crewRunLoader, get(`/crew/runs/${date}`, "crew"), { date });
      expect(run.status, date).toBe(404);
    }
  });

  it("the calendars' data answer 400 for an impossible from or to", async () => {
    const capacity = await call(capacityLoader, get(`/api/capacity?from=${NOT_A_DATE}&to=2027-03-10`, "customer"));
    expect(capacity.status).toBe(400);
    expect(messageOf(capacity.body)).toMatch(/from/);
    const visits = await call(visitsApiLoader, get(`/api/visits?from=2027-02-01&to=${NOT_A_DATE}`, "dispatcher"));
    expect(visits.status).toBe(400);
    // zod runs the range check even when a field failed: it must not meet a non-date.
    const letters = await call(capacityLoader, get("/api/capacity?from=abc&to=2027-03-10", "customer"));
    expect(letters.status).toBe(400);
  });

  it("the office's invoice list ignores an impossible date filter instead of failing", async () => {
    const answer = await call(officeInvoicesLoader, get(`/office/invoices?from=${NOT_A_DATE}`, "office"));
    expect(answer.status).toBe(200);
  });
});

describe("ids no row could have", () => {
  const cases: [string, RouteFn, string, string, string][] = [
    ["dispatch yard", dispatchYardLoader, "dispatcher", "/dispatch/yards/", "yardId"],
    ["dispatch visit", visitLoader, "dispatcher", "/dispatch/visits/", "visitId"],
    ["portal yard", portalYardLoader, "customer", "/portal/yards/", "yardId"],
    ["portal visit report", portalVisitReportLoader, "customer", "/portal/visits/", "visitId"],
    ["office invoice", officeInvoiceLoader, "office", "/office/invoices/", "invoiceId"],
    ["photo", attachmentLoader, "customer", "/api/attachments/", "attachmentId"],
    ["run GPX", runGpxLoader, "dispatcher", "/api/runs/", "runId"],
    ["run iCalendar", runIcsLoader, "dispatcher", "/api/runs/", "runId"],
    ["office invoice PDF", officeInvoicePdfLoader, "office", "/office/invoices/", "invoiceId"],
    ["portal invoice", portalInvoiceLoader, "customer", "/portal/invoices/", "invoiceId"],
  ];
  for (const [name, loader, role, path, param] of cases) {
    it(`${name}: ${TOO_BIG_ID}, abc, 0 and -1 answer 404`, async () => {
      for (const id of [TOO_BIG_ID, "abc", "0", "-1", "1e3"]) {
        const answer = await call(loader, get(`${path}${id}`, role), { [param]: id });
        expect(answer.status, `${name} ${id}`).toBe(404);
      }
    });
  }
});
