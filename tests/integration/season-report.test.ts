import { execFileSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { defaultBusinessSettings, type BusinessSettings } from "~/domain/settings";
import { seasonReportForCustomer, seasonYearFromUrl, type SeasonReport } from "~/models/season-report.server";
import { loadBusinessSettings, saveBusinessSettings } from "~/models/settings.server";
import { confirmRunSafetyCheck, confirmSupersOff, finishVisit, recordTally } from "~/models/tallies.server";
import { createCustomerAccount } from "~/models/users.server";
import { loader as seasonPdfLoader } from "~/routes/portal/season-pdf";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { renderSeasonReportPdf } from "~/services/season-report-pdf.server";
import { sessionStorage } from "~/services/session.server";
import { ALL_SAFE, aCrew, aKey, type TestCrew } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

let crew: TestCrew;
let settings: BusinessSettings;

// Thresholds of this test's business (not the defaults), so the report must read settings.
const THRESHOLDS = [
  { fromMonth: 1, toMonth: 7, mitesPer100: 2 },
  { fromMonth: 8, toMonth: 12, mitesPer100: 4 },
];

beforeEach(async () => {
  await resetDatabase(db);
  crew = await aCrew(db, "Crew Season");
  const [owner] = await db("users").insert({ email: "owner@example.test", password_hash: "x", role: "owner", name: "Owner" }).returning("id");
  await saveBusinessSettings(db, { ...defaultBusinessSettings, miteThresholds: THRESHOLDS, roundIntervalDays: 7 }, owner.id);
  settings = await loadBusinessSettings(db);
});

// --- builders: rows made through the real booking/crew model functions where they exist ---

async function aCustomer(tag: string) {
  const email = `${tag}.${Math.random().toString(36).slice(2, 8)}@example.test`;
  const userId = await createCustomerAccount(db, { name: `Customer ${tag}`, email, password: "season report password" });
  const customer = await db("customers").where({ user_id: Number(userId) }).first("id");
  return { userId: Number(userId), customerId: Number(customer!.id) };
}

async function aYard(customerId: number, name: string, colonies: number) {
  const [yard] = await db("yards")
    .insert({ customer_id: customerId, name, lat: 42.45, lng: -76.48, colony_count: colonies, brood_status: "brood", access_notes: "" })
    .returning("id");
  await db("colonies").insert(Array.from({ length: colonies }, (_, i) => ({ yard_id: yard.id, label: `H${i + 1}`, brood_boxes: 1, brood_status: "brood" })));
  return Number(yard.id);
}

/** A booking and course for the yard with its first visit on `date`. */
async function aCourse(customerId: number, yardId: number, date: string, rounds: number) {
  const colonies = (await db("yards").where({ id: yardId }).first("colony_count"))!.colony_count;
  const [booking] = await db("bookings").insert({ customer_id: customerId, yard_id: yardId, service_date: date, colonies, status: "confirmed" }).returning("id");
  const [course] = await db("courses")
    .insert({ yard_id: yardId, booking_id: booking.id, brood_status: "brood", rounds_planned: rounds, interval_days: 7 })
    .returning("id");
  const [visit] = await db("visits").insert({ course_id: course.id, yard_id: yardId, round_number: 1, service_date: date, colonies_expected: colonies }).returning("id");
  return Number(visit.id);
}

/** Puts the visit on the crew's published run of its day. */
async function onRun(visitId: number) {
  const visit = (await db("visits").where({ id: visitId }).first("service_date"))!;
  let run = await db("runs").where({ crew_id: crew.id, service_date: visit.service_date }).first("id");
  if (!run) [run] = await db("runs").insert({ crew_id: crew.id, service_date: visit.service_date, status: "published", published_at: new Date() }).returning("id");
  const position = Number(((await db("stops").where({ run_id: run!.id }).first(db.raw("count(*)::int as n"))) as unknown as { n: number }).n);
  const at = new Date(`${visit.service_date}T14:00:00Z`);
  await db("stops").insert({ run_id: run!.id, visit_id: visitId, position, arrive_at: at, start_at: at, leave_at: new Date(at.getTime() + 30 * 60_000) });
  return Number(run!.id);
}

type ColonyTally = { skip?: boolean; mites?: number; bees?: number };

/** The crew's round at a visit: safety check, supers off, a tally per colony, finish. Returns the next round's visit id. */
async function doRound(visitId: number, tallies: Record<string, ColonyTally>) {
  const runId = await onRun(visitId);
  const userId = crew.members[0].id;
  await confirmRunSafetyCheck(db, { runId, crewId: crew.id, userId, items: ALL_SAFE });
  await confirmSupersOff(db, { visitId, crewId: crew.id, userId, idempotencyKey: aKey("supers") });
  for (const [label, t] of Object.entries(tallies)) {
    await recordTally(db, {
      visitId,
      crewId: crew.id,
      userId,
      idempotencyKey: aKey("tally"),
      colonyLabel: label,
      outcome: t.skip ? "skipped" : "treated",
      skipReason: t.skip ? "queenless" : null,
      mites: t.mites ?? null,
      beesSampled: t.bees ?? null,
      recordedAt: new Date(),
    });
  }
  const result = await finishVisit(db, { visitId, crewId: crew.id, userId, finishKey: aKey("finish") });
  return result.nextVisitId;
}

type ExpectedRound = { visit_id: number; yard_id: number; service_date: string; treated: number; skipped: number; counted: number; avg: number | null };

/** The rounds of a customer's year, counted and averaged by SQL alone. */
async function roundsBySql(customerId: number, year: number): Promise<ExpectedRound[]> {
  const { rows } = await db.raw<{ rows: ExpectedRound[] }>(
    `select v.id as visit_id, v.yard_id, v.service_date,
            count(t.id) filter (where t.outcome = 'treated')::int as treated,
            count(t.id) filter (where t.outcome = 'skipped')::int as skipped,
            count(t.id) filter (where t.mites is not null and t.bees_sampled > 0)::int as counted,
            round(avg(t.mites * 100.0 / t.bees_sampled) filter (where t.mites is not null and t.bees_sampled > 0), 2) as avg
       from visits v
       join yards y on y.id = v.yard_id
       left join tallies t on t.visit_id = v.id
      where y.customer_id = ? and v.status = 'done' and extract(year from v.service_date) = ?
      group by v.id
      order by v.service_date, v.id`,
    [customerId, year],
  );
  return rows.map((r) => ({ ...r, visit_id: Number(r.visit_id), yard_id: Number(r.yard_id), avg: r.avg === null ? null : Number(r.avg) }));
}

async function pdfText(pdf: Buffer | Uint8Array): Promise<string> {
  const dir = mkdtempSync(path.join(tmpdir(), "season-pdf-"));
  try {
    const file = path.join(dir, "report.pdf");
    writeFileSync(file, pdf);
    return execFileSync("pdftotext", ["-layout", file, "-"], { encoding: "utf8" });
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Two customers with a season each; A has two yards (one without rounds in 2025) and a round in 2024. */
async function twoCustomers() {
  const a = await aCustomer("alder");
  const b = await aCustomer("birch");
  const orchard = await aYard(a.customerId, "Cider Press Orchard", 4);
  const hollow = await aYard(a.customerId, "Hollow Creek Stand", 2);
  const quarry = await aYard(b.customerId, "Quarry Hill Bee Yard", 3);

  // A, orchard: three rounds from 1 October 2025; the third is still to come.
  const r1 = await aCourse(a.customerId, orchard, "2025-10-01", 3);
  const r2 = await doRound(r1, { H1: { mites: 9, bees: 300 }, H2: { mites: 21, bees: 300 }, H3: { mites: 14, bees: 310 }, H4: {} });
  const r3 = await doRound(r2!, { H1: { mites: 3, bees: 300 }, H2: { mites: 6, bees: 290 }, H3: {}, H4: { skip: true } });
  // A, hollow: one broodless round in 2024 only.
  const h1 = await aCourse(a.customerId, hollow, "2024-11-20", 1);
  await doRound(h1, { H1: { mites: 1, bees: 300 }, H2: {} });
  // B, quarry: a season in 2025 with high counts, and one in 2023.
  const q1 = await aCourse(b.customerId, quarry, "2025-10-02", 2);
  const q2 = await doRound(q1, { H1: { mites: 40, bees: 300 }, H2: { mites: 33, bees: 300 }, H3: { mites: 25, bees: 250 } });
  await doRound(q2!, { H1: { mites: 12, bees: 300 }, H2: {}, H3: {} });
  const old = await aCourse(b.customerId, quarry, "2023-10-05", 1);
  await doRound(old, { H1: {}, H2: {}, H3: {} });
  return { a, b, yards: { orchard, hollow, quarry }, nextOrchardVisit: r3! };
}

describe("season report", () => {
  it("counts rounds, colonies treated and mite averages per yard as SQL does, and shows what is next", async () => {
    const { a, yards, nextOrchardVisit } = await twoCustomers();
    const report = await seasonReportForCustomer(db, { customerId: a.customerId, year: 2025, today: "2025-10-10", settings });

    const expected = await roundsBySql(a.customerId, 2025);
    expect(expected).toHaveLength(2); // both orchard rounds; nothing of B's
    expect(report.yards.map((y) => y.yardId).sort()).toEqual([yards.orchard, yards.hollow].sort());

    for (const yard of report.yards) {
      const mine = expected.filter((r) => r.yard_id === yard.yardId);
      const row = (await db("yards").where({ id: yard.yardId }).first("colony_count"))!;
      expect(yard.colonies).toBe(row.colony_count);
      expect(yard.roundsDone).toBe(mine.length);
      expect(yard.treatmentsGiven).toBe(mine.reduce((s, r) => s + r.treated, 0));
      expect(
        yard.rounds.map((r) => ({ visit_id: r.visitId, yard_id: yard.yardId, service_date: r.serviceDate, treated: r.coloniesTreated, skipped: r.coloniesSkipped, counted: r.coloniesCounted, avg: r.averageMitesPer100 })),
      ).toEqual(mine);
    }

    const orchard = report.yards.find((y) => y.yardId === yards.orchard)!;
    const [first, second] = expected;
    // The change between rounds, from the SQL averages.
    expect(orchard.rounds[0].changeFromPrevious).toBeNull();
    const { rows: change } = await db.raw<{ rows: { diff: string; pct: string }[] }>("select round(?::numeric - ?::numeric, 2) as diff, round((?::numeric - ?::numeric) * 100 / ?::numeric, 1) as pct", [
      second.avg,
      first.avg,
      first.avg,
      second.avg,
      first.avg,
    ]);
    expect(orchard.rounds[1].changeFromPrevious).toBe(Number(change[0].diff));
    expect(orchard.rounds[1].percentFewerThanPrevious).toBe(Number(change[0].pct));
    expect(orchard.percentFewerOverSeason).toBe(Number(change[0].pct));
    expect(orchard.firstCount).toEqual({ serviceDate: first.service_date, averageMitesPer100: first.avg });
    expect(orchard.latestCount).toEqual({ serviceDate: second.service_date, averageMitesPer100: second.avg });

    // October's threshold from this business's settings (4 per 100 bees), and each average against it.
    for (const [i, round] of orchard.rounds.entries()) {
      expect(round.threshold).toBe(4);
      // Compared as shown, to one decimal.
      const shown = Math.round(expected[i].avg! * 10) / 10;
      expect(round.level).toBe(shown < 4 ? "below" : shown === 4 ? "at" : "above");
    }
    expect(report.thresholdLines).toEqual(["January to July: 2 mites per 100 bees", "August to December: 4 mites per 100 bees"]);

    // What is next: the third round, made when the second was finished.
    const next = (await db("visits").where({ id: nextOrchardVisit }).first("service_date", "round_number", "status"))!;
    expect(orchard.next).toMatchObject({ visitId: nextOrchardVisit, serviceDate: next.service_date, roundNumber: next.round_number, roundsPlanned: 3 });
    expect(orchard.text.next).toContain(`round ${next.round_number} of 3`);

    const hollow = report.yards.find((y) => y.yardId === yards.hollow)!;
    expect(hollow.rounds).toEqual([]);
    expect(hollow.next).toBeNull();

    // Years: the customer's own (2024, 2025) and the current one; never B's 2023.
    expect(report.years).toContain(2024);
    expect(report.years).toContain(2025);
    expect(report.years).not.toContain(2023);
    expect(report.totals.roundsDone).toBe(expected.length);
  });

  it("never shows another customer's yards, rounds or counts", async () => {
    const { a, b, yards } = await twoCustomers();
    for (const year of [2023, 2024, 2025]) {
      const report = await seasonReportForCustomer(db, { customerId: a.customerId, year, today: "2025-10-10", settings });
      expect(report.yards.map((y) => y.yardId)).not.toContain(yards.quarry);
      const visitIds = report.yards.flatMap((y) => y.rounds.map((r) => r.visitId));
      const foreign = await db("visits").whereIn("id", visitIds.length ? visitIds : [0]).where({ yard_id: yards.quarry });
      expect(foreign).toEqual([]);
    }
    const theirs = await seasonReportForCustomer(db, { customerId: b.customerId, year: 2025, today: "2025-10-10", settings });
    expect(theirs.yards.map((y) => y.yardId)).toEqual([yards.quarry]);
    expect(theirs.yards[0].rounds.map((r) => ({ visit_id: r.visitId, avg: r.averageMitesPer100 }))).toEqual(
      (await roundsBySql(b.customerId, 2025)).map((r) => ({ visit_id: r.visit_id, avg: r.avg })),
    );
  });

  it("renders the PDF with every yard's name, and the download shows only the signed-in customer's yards", async () => {
    const { a } = await twoCustomers();
    const report: SeasonReport = await seasonReportForCustomer(db, { customerId: a.customerId, year: 2025, today: "2025-10-10", settings });
    const text = await pdfText(await renderSeasonReportPdf(report, { businessName: "Test Treatments" }));
    expect(text).toContain("Season report 2025");
    for (const yard of report.yards) expect(text).toContain(yard.name);
    expect(text).toContain("Respirator");

    // Through the route, with A's session cookie.
    const session = await sessionStorage().getSession();
    session.set("userId", String(a.userId));
    const cookie = (await sessionStorage().commitSession(session)).split(";")[0];
    const response = (await seasonPdfLoader({
      request: new Request("http://127.0.0.1/portal/season/pdf?year=2025", { headers: { Cookie: cookie } }),
      params: {},
      context: {},
    } as never)) as Response;
    expect(response.headers.get("Content-Type")).toBe("application/pdf");
    expect(response.headers.get("Content-Disposition")).toMatch(/^attachment; filename="varroute-season-report-2025\.pdf"$/);
    const routeText = await pdfText(new Uint8Array(await response.arrayBuffer()));
    expect(routeText).toContain("Cider Press Orchard");
    expect(routeText).toContain("Hollow Creek Stand");
    expect(routeText).not.toContain("Quarry Hill");
  });

  it("takes the year from ?year=, falls back to the current year, and refuses anything else", () => {
    const url = (q: string) => new URL(`http://127.0.0.1/portal/season${q}`);
    expect(seasonYearFromUrl(url("?year=2025"), 2026)).toBe(2025);
    expect(seasonYearFromUrl(url(""), 2026)).toBe(2026);
    expect(seasonYearFromUrl(url("?year="), 2026)).toBe(2026);
    expect(seasonYearFromUrl(url("?year=25"), 2026)).toBeNull();
    expect(seasonYearFromUrl(url("?year=1999"), 2026)).toBeNull();
    expect(seasonYearFromUrl(url("?year=2025;drop"), 2026)).toBeNull();
  });
});
