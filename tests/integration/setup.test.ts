import { execFileSync } from "node:child_process";
import { randomUUID } from "node:crypto";
import { fileURLToPath } from "node:url";
import knex from "knex";
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import config from "../../knexfile";
import { defaultBusinessSettings } from "~/domain/settings";
import { businessIsSetUp } from "~/models/setup.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { hashPassword, verifyCredentials } from "~/models/users.server";
import { loader as rootLoader } from "~/root";
import { action as setupAction, loader as setupLoader } from "~/routes/public/setup";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { optionalUser } from "~/services/permissions.server";
import { migrationConfig } from "./migration-source";
import { resetDatabase } from "./reset-database";

// The first run of a business of its own: an empty database leads every page to /setup; the
// setup page makes the owner, the settings, the first crew and the audit entries in one
// transaction, once, and signs the owner in. Route loaders and actions are called directly
// with Request objects. Also: scripts/seed-if-empty.ts with and without VARROUTE_DEMO=0.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const ORIGIN = "http://localhost";
const ROOT_DIR = fileURLToPath(new URL("../..", import.meta.url));
const run = randomUUID().slice(0, 8);
const PASSWORD = "quiet walnut harbour drift";

/** A complete, valid setup form (the settings fields in the settings page's formats). */
const VALID: Record<string, string> = {
  businessName: "Cedar Hollow Mite Care",
  businessAddress: "12 Kiln Lane, Dryden, NY 13053",
  timeZone: "America/Chicago",
  ownerName: "Robin Alder",
  email: `Robin.Alder.${run}@Example.test`,
  password: PASSWORD,
  confirm: PASSWORD,
  depotLabel: "Shop, 12 Kiln Lane",
  lat: "42.49",
  lng: "-76.3",
  productName: "Oxalic acid dihydrate, beekeeping grade",
  productRegistrationNumber: "TEST-REG-0001",
  labelMaximumGramsPerBroodBox: "2",
  doseGramsPerBroodBox: "1.5",
  pricePerColonyCents: "12.50",
  tripFeeCents: "30",
  minimumPerVisitCents: "40",
  taxRatePercent: "6.5",
};

type Outcome = { status: number; body: unknown; headers?: Headers };

/** What a route answered: status and body, whether it returned or threw a Response or data(). */
async function outcome(call: () => unknown): Promise<Outcome> {
  const read = (value: unknown): Outcome => {
    if (value instanceof Response) return { status: value.status, body: null, headers: value.headers };
    if (value && typeof value === "object" && (value as { type?: string }).type === "DataWithResponseInit") {
      const d = value as { data: unknown; init: { status?: number } | null };
      return { status: d.init?.status ?? 200, body: d.data };
    }
    return { status: 200, body: value };
  };
  try {
    return read(await call());
  } catch (thrown) {
    if (thrown instanceof Response || (thrown && typeof thrown === "object" && (thrown as { type?: string }).type === "DataWithResponseInit")) return read(thrown);
    throw thrown;
  }
}

function pageRequest(path: string) {
  return new Request(`${ORIGIN}${path}`);
}

/** The setup form posted, with `changes` over VALID (null leaves a field out). */
function submit(changes: Record<string, string | null> = {}) {
  const fields = { ...VALID, ...changes };
  const body = new URLSearchParams(Object.entries(fields).filter((entry): entry is [string, string] => entry[1] !== null));
  const request = new Request(`${ORIGIN}/setup`, { method: "POST", body });
  return outcome(() => setupAction({ request, params: {}, context: {} } as never));
}

const gate = (path: string) => outcome(() => rootLoader({ request: pageRequest(path), params: {}, context: {} } as never));
const setupPage = () => outcome(() => setupLoader());

async function count(table: "users" | "settings" | "crews" | "business_setup" | "audit_log" | "sessions", where: Record<string, unknown> = {}): Promise<number> {
  const row = await db(table).where(where).count<{ n: string }[]>("* as n").first();
  return Number(row?.n ?? 0);
}

async function nothingWritten() {
  for (const table of ["users", "settings", "crews", "business_setup", "audit_log", "sessions"] as const) expect(await count(table), table).toBe(0);
}

describe("first run on an empty database", () => {
  beforeAll(() => resetDatabase(db));

  it("sends every page to /setup while nobody owns the business, and shows the setup page with the product fields empty", async () => {
    for (const path of ["/", "/dispatch", "/sign-in", "/portal/bookings", "/no-such-page", "/dispatch.data"]) {
      const answer = await gate(path);
      expect(answer.status, path).toBe(302);
      expect(answer.headers?.get("Location"), path).toBe("/setup");
    }
    expect(await gate("/setup")).toEqual({ status: 200, body: null });
    expect(await gate("/setup.data")).toEqual({ status: 200, body: null });

    const page = await setupPage();
    expect(page.status).toBe(200);
    const body = page.body as { timeZones: string[]; values: Record<string, string> };
    expect(body.timeZones).toContain("America/New_York");
    expect(body.timeZones).toContain("UTC");
    // The product and its registration number come from the owner's label, never a default.
    expect(body.values.productName).toBe("");
    expect(body.values.productRegistrationNumber).toBe("");
  });

  const BAD_FIELDS: { field: string; changes: Record<string, string | null>; message: RegExp }[] = [
    { field: "businessName", changes: { businessName: "  " }, message: /Enter the business name/ },
    { field: "businessAddress", changes: { businessAddress: "" }, message: /postal address/ },
    { field: "timeZone", changes: { timeZone: "Mars/Olympus_Mons" }, message: /time zone/ },
    { field: "timeZone", changes: { timeZone: "" }, message: /time zone/ },
    { field: "ownerName", changes: { ownerName: "" }, message: /Enter your name/ },
    { field: "email", changes: { email: "robin-at-example" }, message: /valid e-mail/ },
    { field: "password", changes: { password: "short pw", confirm: "short pw" }, message: /at least 10 characters/ },
    { field: "password", changes: { password: "password1234", confirm: "password1234" }, message: /common passwords|too easy to guess/ },
    { field: "password", changes: { password: "Robin Alder hives", confirm: "Robin Alder hives" }, message: /name and e-mail/ },
    { field: "confirm", changes: { confirm: "quiet walnut harbour drifts" }, message: /differ/ },
    { field: "depotLabel", changes: { depotLabel: "" }, message: /Name the depot/ },
    { field: "lat", changes: { lat: "" }, message: /Place the depot on the map/ },
    { field: "lat", changes: { lat: "91" }, message: /between −90 and 90/ },
    { field: "lng", changes: { lng: null }, message: /Place the depot on the map/ },
    { field: "lng", changes: { lng: "-181" }, message: /between −180 and 180/ },
    { field: "productName", changes: { productName: "" }, message: /product name/ },
    { field: "productRegistrationNumber", changes: { productRegistrationNumber: "" }, message: /registration number/ },
    // Left out of the post, it must not fall back to the settings' default number.
    { field: "productRegistrationNumber", changes: { productRegistrationNumber: null }, message: /registration number/ },
    { field: "labelMaximumGramsPerBroodBox", changes: { labelMaximumGramsPerBroodBox: "" }, message: /label maximum/ },
    { field: "doseGramsPerBroodBox", changes: { doseGramsPerBroodBox: "2.5" }, message: /exceeds the label maximum/ },
    { field: "pricePerColonyCents", changes: { pricePerColonyCents: "-1" }, message: /price per colony/ },
    { field: "tripFeeCents", changes: { tripFeeCents: "" }, message: /trip fee/ },
    { field: "minimumPerVisitCents", changes: { minimumPerVisitCents: "fifty" }, message: /minimum per visit/ },
    { field: "taxRatePercent", changes: { taxRatePercent: "" }, message: /tax rate/ },
    { field: "taxRatePercent", changes: { taxRatePercent: "45" }, message: /tax rate/ },
  ];

  it("answers each bad field with a message at that field alone, keeps the input but not the passwords, and writes nothing", async () => {
    for (const { field, changes, message } of BAD_FIELDS) {
      const answer = await submit(changes);
      const where = `${field} ${JSON.stringify(changes)}`;
      expect(answer.status, where).toBe(400);
      const body = answer.body as { errors: Record<string, string>; values: Record<string, string> };
      expect(Object.keys(body.errors), where).toEqual([field]);
      expect(body.errors[field], where).toMatch(message);
      expect(body.values.businessName, where).toBe(changes.businessName ?? VALID.businessName);
      expect(body.values, where).not.toHaveProperty("password");
      expect(body.values, where).not.toHaveProperty("confirm");
    }
    await nothingWritten();
    expect(await gate("/dispatch")).toMatchObject({ status: 302 });
  });

  it("refuses an address that has an account already (a customer who signed up first), and writes nothing", async () => {
    const email = `early.customer.${run}@example.test`;
    const [customer] = await db("users").insert({ email, password_hash: await hashPassword("amber ferry lantern moss"), role: "customer", name: "Early Customer" }).returning("id");
    try {
      const answer = await submit({ email });
      expect(answer.status).toBe(409);
      expect((answer.body as { errors: Record<string, string> }).errors).toEqual({ email: expect.stringMatching(/already has an account/) });
      expect(await count("users")).toBe(1);
      for (const table of ["settings", "crews", "business_setup", "audit_log", "sessions"] as const) expect(await count(table), table).toBe(0);
    } finally {
      await db("users").where({ id: customer.id }).delete();
    }
  });

  let ownerId = 0;

  it("sets the business up from a valid form in one go: owner, settings, first crew at the depot, audit entries; signs the owner in", async () => {
    const answer = await submit();
    expect(answer.status).toBe(302);
    expect(answer.headers?.get("Location")).toBe("/dispatch?welcome=1");

    const email = VALID.email.toLowerCase();
    const owners = await db("users").select("id", "email", "role", "name");
    expect(owners).toEqual([{ id: expect.any(Number), email, role: "owner", name: "Robin Alder" }]);
    ownerId = Number(owners[0].id);
    expect(await verifyCredentials(db, email, PASSWORD)).toBe(String(ownerId));

    const settings = await loadBusinessSettings(db);
    expect(settings).toMatchObject({
      businessName: "Cedar Hollow Mite Care",
      businessAddress: "12 Kiln Lane, Dryden, NY 13053",
      timeZone: "America/Chicago",
      productName: "Oxalic acid dihydrate, beekeeping grade",
      productRegistrationNumber: "TEST-REG-0001",
      labelMaximumGramsPerBroodBox: 2,
      doseGramsPerBroodBox: 1.5,
      pricePerColonyCents: 1250,
      tripFeeCents: 3000,
      minimumPerVisitCents: 4000,
      taxRateBasisPoints: 650,
      // Everything the page does not ask keeps its default.
      roundsWithBrood: defaultBusinessSettings.roundsWithBrood,
      miteThresholds: defaultBusinessSettings.miteThresholds,
    });

    const crews = await db("crews").select("*");
    expect(crews).toHaveLength(1);
    expect(crews[0]).toMatchObject({
      name: "Crew 1",
      start_label: "Shop, 12 Kiln Lane",
      end_lat: null,
      end_lng: null,
      vaporizers: defaultBusinessSettings.vaporizersPerCrew,
      active: true,
    });
    expect([Number(crews[0].start_lat), Number(crews[0].start_lng)]).toEqual([42.49, -76.3]);
    expect([String(crews[0].work_start).slice(0, 5), String(crews[0].work_end).slice(0, 5)]).toEqual(["08:00", "17:00"]);
    expect(crews[0].working_weekdays.map(Number)).toEqual([1, 2, 3, 4, 5]);

    expect(await db("business_setup").select("owner_user_id")).toEqual([{ owner_user_id: ownerId }]);
    const audit = await db("audit_log").orderBy("action").select("action", "actor_user_id");
    expect(audit).toEqual([
      { action: "business.setup", actor_user_id: ownerId },
      { action: "crew.create", actor_user_id: ownerId },
      { action: "settings.update", actor_user_id: ownerId },
    ]);

    const cookie = answer.headers?.get("Set-Cookie")?.split(";")[0];
    expect(cookie).toBeTruthy();
    const signedIn = await optionalUser(new Request(`${ORIGIN}/dispatch`, { headers: { Cookie: cookie! } }));
    expect(signedIn).toMatchObject({ id: String(ownerId), role: "owner", email });
  });

  it("once set up: pages pass the gate, and the setup page and a second submit are not found", async () => {
    expect(ownerId).toBeGreaterThan(0);
    expect(await gate("/dispatch")).toEqual({ status: 200, body: null });
    expect(await gate("/")).toEqual({ status: 200, body: null });
    expect((await setupPage()).status).toBe(404);
    const again = await submit({ email: `second.${run}@example.test`, businessName: "Someone Else's Business" });
    expect(again.status).toBe(404);
    expect(await db("users").pluck("id")).toEqual([ownerId]);
    expect((await loadBusinessSettings(db)).businessName).toBe("Cedar Hollow Mite Care");
    expect(await count("crews")).toBe(1);
  });
});

describe("setup submits at once", () => {
  beforeEach(() => resetDatabase(db));

  /** Sessions of this database waiting for a lock. */
  async function waitingForLocks(): Promise<number> {
    const { rows } = await db.raw<{ rows: { n: number }[] }>(
      "select count(*)::int as n from pg_stat_activity where datname = current_database() and wait_event_type = 'Lock'",
    );
    return rows[0].n;
  }

  it("make exactly one owner, one crew and one set of settings; the others are not found", async () => {
    // Writes to users wait until every submit has passed its first check and hashed its
    // password, so all three really are in flight together when the first may write.
    const hold = await db.transaction();
    await hold.raw("lock table users in exclusive mode");
    const pending = Promise.all([
      submit({ email: `first.${run}@example.test`, businessName: "First Business" }),
      submit({ email: `second.${run}@example.test`, businessName: "Second Business" }),
      submit({ email: `third.${run}@example.test`, businessName: "Third Business" }),
    ]);
    try {
      const until = Date.now() + 20_000;
      while ((await waitingForLocks()) < 3) {
        if (Date.now() > until) throw new Error("the three submits never all waited");
        await new Promise((r) => setTimeout(r, 50));
      }
    } finally {
      await hold.commit();
    }
    const answers = await pending;
    expect(answers.map((a) => a.status).sort()).toEqual([302, 404, 404]);
    expect(await count("users", { role: "owner" })).toBe(1);
    expect(await count("users")).toBe(1);
    expect(await count("crews")).toBe(1);
    expect(await count("settings")).toBe(1);
    expect(await count("business_setup")).toBe(1);
    const winner = answers.findIndex((a) => a.status === 302);
    expect((await loadBusinessSettings(db)).businessName).toBe(["First Business", "Second Business", "Third Business"][winner]);
  });
});

describe("a database that has an owner already", () => {
  beforeEach(() => resetDatabase(db));

  it("counts as set up without a setup row (the demo, older databases): the setup page is not found", async () => {
    await db("users").insert({ email: `owner.${run}@example.test`, password_hash: "x", role: "owner", name: "Olive Owner" });
    expect(await count("business_setup")).toBe(0);
    expect(await businessIsSetUp(db)).toBe(true);
    expect((await setupPage()).status).toBe(404);
    expect((await submit()).status).toBe(404);
    expect(await count("users")).toBe(1);
  });

  it("is marked set up by the migration", async () => {
    const migrator = knex({ ...config, connection: process.env.DATABASE_URL, migrations: migrationConfig() });
    try {
      const [owner] = await db("users").insert({ email: `owner.${run}@example.test`, password_hash: "x", role: "owner", name: "Olive Owner" }).returning("id");
      await migrator.migrate.down({ name: "20261204060000_setup.ts" });
      expect(await migrator.schema.hasTable("business_setup")).toBe(false);
      await migrator.migrate.up({ name: "20261204060000_setup.ts" });
      expect(await db("business_setup").select("owner_user_id")).toEqual([{ owner_user_id: Number(owner.id) }]);
    } finally {
      await migrator.migrate.latest();
      await migrator.destroy();
    }
  });
});

describe("scripts/seed-if-empty.ts", () => {
  beforeEach(() => resetDatabase(db));

  /** Runs the script against this test file's database; returns its output (throws on a non-zero exit). */
  function seedIfEmpty(demo: string | undefined): string {
    const env: NodeJS.ProcessEnv = { ...process.env, DATABASE_URL: process.env.DATABASE_URL, APP_URL: "http://127.0.0.1:3199" };
    if (demo === undefined) delete env.VARROUTE_DEMO;
    else env.VARROUTE_DEMO = demo;
    return execFileSync("node", ["--import", "tsx", "scripts/seed-if-empty.ts"], { cwd: ROOT_DIR, env, encoding: "utf8", stdio: ["ignore", "pipe", "pipe"] });
  }

  it("with VARROUTE_DEMO=0 leaves an empty database empty and points to the setup page", async () => {
    const output = seedIfEmpty("0");
    expect(output).toContain("http://127.0.0.1:3199/setup");
    expect(await count("users")).toBe(0);
    expect(await count("settings")).toBe(0);
    expect(await businessIsSetUp(db)).toBe(false);
  });

  it("with VARROUTE_DEMO=0 leaves a database that has users alone", async () => {
    await db("users").insert({ email: `owner.${run}@example.test`, password_hash: "x", role: "owner", name: "Olive Owner" });
    const output = seedIfEmpty("0");
    expect(output).toContain("already has 1 users");
    expect(await count("users")).toBe(1);
    expect(await count("crews")).toBe(0);
  });

  it("refuses a VARROUTE_DEMO that is neither 0 nor 1, and writes nothing", async () => {
    let failure: { status?: number; stderr?: string } | null = null;
    try {
      seedIfEmpty("no");
    } catch (error) {
      failure = error as { status?: number; stderr?: string };
    }
    expect(failure?.status).toBe(1);
    expect(failure?.stderr).toMatch(/VARROUTE_DEMO must be 0/);
    expect(await count("users")).toBe(0);
  });

  it("without VARROUTE_DEMO seeds the demo into an empty database, as npm start and npm test do", async () => {
    const output = seedIfEmpty(undefined);
    expect(output).toContain("seeded demo data");
    expect(await count("users", { role: "owner" })).toBeGreaterThan(0);
    expect(await count("crews")).toBeGreaterThan(0);
    expect(await businessIsSetUp(db)).toBe(true);
  });
});
