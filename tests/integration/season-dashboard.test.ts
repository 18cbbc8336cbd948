import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { defaultBusinessSettings } from "~/domain/settings";
import {
  driveMinutesPerColony,
  miteLoadByAreaIn,
  moneyByWeek,
  receivablesAtEnd,
  seasonDashboard,
  treatmentByWeek,
  visitsPerCrewDayIn,
  type SeasonDashboard,
} from "~/models/season-dashboard.server";
import { saveBusinessSettings } from "~/models/settings.server";
import { loader } from "~/routes/office/dashboard";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { sessionStorage } from "~/services/session.server";
import { aCrew, aStop, type TestCrew } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

// Acceptance: every figure of the season dashboard equals a total computed here with raw SQL
// written independently of the model (different formulations where there are several: instant
// bounds instead of converting each timestamp, date_trunc and to_char weeks, a CASE ladder for
// the age buckets, the area rule redone in SQL). The data is built here: three crews, visits
// inside and outside the period and in states that must not count, tallies with doses and
// mite washes, invoices open, paid, void and refunded with payments either side of the
// period's ends, and runs with planned drive times.

const PERIOD = { from: "2026-10-05", to: "2026-11-18" }; // Monday to a Wednesday
const ZONE = "America/Chicago"; // not the default zone: the model must read it from settings

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

type Tally = { outcome: "treated" | "skipped"; boxes: number; grams: number; mites?: number; bees?: number };
type VisitSpec = {
  crew: "north" | "south" | "west";
  date: string;
  status: "done" | "in_progress" | "cancelled";
  round: number;
  rounds: number;
  yard: { address: string | null; lat: number; lng: number };
  tallies: Tally[];
};

const T = (boxes: number, grams: number, mites?: number, bees?: number): Tally => ({ outcome: "treated", boxes, grams, mites, bees });
const S = (mites?: number, bees?: number): Tally => ({ outcome: "skipped", boxes: 1, grams: 0, mites, bees });

const DRYDEN_A = { address: "10 Kiln Rd, Dryden, NY 13053", lat: 42.49, lng: -76.3 };
const DRYDEN_B = { address: "4 Elm St, dryden, NY 13053", lat: 42.5, lng: -76.29 };
const GROTON = { address: "7 Main St, Groton, NY 13073", lat: 42.59, lng: -76.37 };
const ITHACA_A = { address: "3 Hill Rd, Ithaca, NY 14850", lat: 42.44, lng: -76.5 };
const ITHACA_B = { address: "8 Lake St, Ithaca, NY 14850", lat: 42.43, lng: -76.49 };
const ITHACA_C = { address: "1 Oak Ave, Ithaca, NY 14850", lat: 42.45, lng: -76.48 };
const NO_TOWN_NE = { address: null, lat: 42.5, lng: -76.35 }; // north-east of the base (42.4, -76.5)
const NO_TOWN_S = { address: "Behind the old barn", lat: 42.25, lng: -76.5 }; // south
const NO_TOWN_W = { address: "Farm lane off Route 13", lat: 42.45, lng: -76.8 }; // west

const VISITS: VisitSpec[] = [
  { crew: "north", date: "2026-10-06", status: "done", round: 1, rounds: 3, yard: DRYDEN_A, tallies: [T(2, 2, 12, 300), T(1, 1, 6, 310), S(), T(1, 1.25)] },
  { crew: "north", date: "2026-10-06", status: "done", round: 2, rounds: 3, yard: GROTON, tallies: [T(1, 1, 1, 305), T(2, 2), T(2, 2)] },
  { crew: "north", date: "2026-10-06", status: "in_progress", round: 1, rounds: 1, yard: ITHACA_A, tallies: [T(1, 1, 20, 300), T(1, 1)] },
  { crew: "north", date: "2026-10-13", status: "done", round: 1, rounds: 3, yard: NO_TOWN_NE, tallies: [T(1, 1, 9, 300), T(1, 1, 15, 290)] },
  { crew: "south", date: "2026-10-13", status: "done", round: 3, rounds: 3, yard: DRYDEN_B, tallies: [T(2, 2, 2, 320), T(1, 1)] },
  { crew: "south", date: "2026-10-13", status: "done", round: 2, rounds: 2, yard: ITHACA_C, tallies: [T(1, 1.5, 4, 400)] },
  { crew: "south", date: "2026-10-14", status: "done", round: 1, rounds: 1, yard: ITHACA_B, tallies: [T(1, 1), T(1, 1), T(1, 1), T(1, 1), T(1, 1, 5)] },
  { crew: "west", date: "2026-10-28", status: "cancelled", round: 1, rounds: 1, yard: ITHACA_A, tallies: [] },
  { crew: "west", date: "2026-11-03", status: "done", round: 1, rounds: 1, yard: NO_TOWN_W, tallies: [S(7, 300), S()] },
  { crew: "south", date: "2026-11-18", status: "done", round: 2, rounds: 3, yard: NO_TOWN_S, tallies: [T(1, 1, 3, 300), T(1, 1, 0, 280)] },
  // Outside the period, a day either side:
  { crew: "north", date: "2026-11-19", status: "done", round: 1, rounds: 1, yard: GROTON, tallies: [T(1, 1, 40, 300), T(1, 1), T(1, 1), T(1, 1), T(1, 1)] },
  { crew: "south", date: "2026-10-04", status: "done", round: 1, rounds: 1, yard: DRYDEN_A, tallies: [T(2, 2, 30, 300), T(2, 2), T(2, 2)] },
];

const DRIVE_SECONDS: Record<string, number> = {
  "north 2026-10-06": 5400,
  "north 2026-10-13": 2700,
  "south 2026-10-13": 1800,
  "south 2026-10-14": 3000,
  "west 2026-10-28": 4000,
  "west 2026-11-03": 1500,
  "south 2026-11-18": 2222,
  "north 2026-11-19": 9999,
  "south 2026-10-04": 1234,
};

const crews: Record<VisitSpec["crew"], TestCrew> = {} as never;
let customerId = 0;
let invoiceSeq = 0;
let officeUserId = 0;
let crewUserId = 0;

async function anInvoice(p: { issued: string; due: string; total: number; status: "open" | "paid" | "void" | "refunded" }): Promise<number> {
  invoiceSeq++;
  const [row] = await db("invoices")
    .insert({
      year: 2026,
      sequence: invoiceSeq,
      number: `2026-${String(invoiceSeq).padStart(6, "0")}`,
      customer_id: customerId,
      status: p.status,
      issued_on: p.issued,
      due_on: p.due,
      subtotal_cents: p.total,
      tax_cents: 0,
      total_cents: p.total,
      currency: "usd",
    })
    .returning("id");
  return Number(row.id);
}

async function aPayment(invoiceId: number, cents: number, receivedAt: string): Promise<number> {
  const [row] = await db("payments").insert({ invoice_id: invoiceId, amount_cents: cents, method: "cheque", received_at: new Date(receivedAt) }).returning("id");
  return Number(row.id);
}

beforeAll(async () => {
  await resetDatabase(db);
  const [owner] = await db("users").insert({ email: "owner@example.test", password_hash: "x", role: "owner", name: "Owner" }).returning("id");
  await saveBusinessSettings(db, { ...defaultBusinessSettings, timeZone: ZONE }, Number(owner.id));
  const [office] = await db("users").insert({ email: "office@example.test", password_hash: "x", role: "office", name: "Office" }).returning("id");
  officeUserId = Number(office.id);

  crews.north = await aCrew(db, "North crew");
  crews.south = await aCrew(db, "South crew");
  crews.west = await aCrew(db, "West crew");
  crewUserId = crews.north.members[0].id;
  // Base = middle of the active crews' start points = (42.4, -76.5); the west crew is not active.
  await db("crews").where({ id: crews.north.id }).update({ start_lat: 42.5, start_lng: -76.5 });
  await db("crews").where({ id: crews.south.id }).update({ start_lat: 42.3, start_lng: -76.5 });
  await db("crews").where({ id: crews.west.id }).update({ start_lat: 42.4, start_lng: -77.2, active: false });

  for (const spec of VISITS) {
    const stop = await aStop(db, crews[spec.crew], {
      date: spec.date,
      colonies: Math.max(1, spec.tallies.length),
      rounds: spec.rounds,
      roundNumber: spec.round,
      runStatus: "done",
    });
    await db("yards").where({ id: stop.yardId }).update({ address: spec.yard.address, lat: spec.yard.lat, lng: spec.yard.lng });
    await db("visits")
      .where({ id: stop.visitId })
      .update({ status: spec.status, finished_at: spec.status === "done" ? new Date(`${spec.date}T20:00:00Z`) : null });
    if (spec.tallies.length > 0) {
      await db("tallies").insert(
        spec.tallies.map((t, i) => ({
          visit_id: stop.visitId,
          colony_label: stop.labels[i],
          outcome: t.outcome,
          skip_reason: t.outcome === "skipped" ? "dead_out" : null,
          brood_boxes: t.boxes,
          dose_grams: t.grams,
          mites: t.mites ?? null,
          bees_sampled: t.bees ?? null,
        })),
      );
    }
  }
  for (const [key, seconds] of Object.entries(DRIVE_SECONDS)) {
    const [crew, date] = key.split(" ") as [VisitSpec["crew"], string];
    const updated = await db("runs").where({ crew_id: crews[crew].id, service_date: date }).update({ drive_seconds: seconds });
    expect(updated).toBe(1);
  }

  const [customer] = await db("customers").insert({ name: "Invoice Customer", email: "invoices@example.test" }).returning("id");
  customerId = Number(customer.id);
  const i1 = await anInvoice({ issued: "2026-10-06", due: "2026-10-20", total: 10000, status: "open" });
  await aPayment(i1, 3000, "2026-10-10T15:00:00Z");
  const i2 = await anInvoice({ issued: "2026-10-07", due: "2026-10-21", total: 20000, status: "paid" });
  const p2 = await aPayment(i2, 20000, "2026-11-19T03:00:00Z"); // 21:00 on 18 November in Chicago: inside the period
  await anInvoice({ issued: "2026-10-08", due: "2026-10-22", total: 15000, status: "void" });
  await anInvoice({ issued: "2026-09-01", due: "2026-09-15", total: 8000, status: "open" });
  await anInvoice({ issued: "2026-11-10", due: "2026-11-24", total: 12345, status: "open" });
  await anInvoice({ issued: "2026-11-20", due: "2026-12-04", total: 5000, status: "open" }); // after the period
  const i7 = await anInvoice({ issued: "2026-07-01", due: "2026-07-15", total: 6000, status: "open" });
  await aPayment(i7, 1000, "2026-07-20T16:00:00Z");
  const i8 = await anInvoice({ issued: "2026-10-20", due: "2026-11-03", total: 9000, status: "paid" });
  await aPayment(i8, 9000, "2026-11-25T16:00:00Z"); // paid after the period: still owed at its end
  const i9 = await anInvoice({ issued: "2026-10-15", due: "2026-10-29", total: 7000, status: "refunded" });
  const p9 = await aPayment(i9, 7000, "2026-10-16T12:00:00Z");
  await db("refunds").insert({ payment_id: p9, amount_cents: 7000, reason: "Colonies found dead before the visit", created_at: new Date("2026-10-30T12:00:00Z") });
  // 01:00 on 19 November in Chicago: after the period (a part refund keeps that invoice paid).
  await db("refunds").insert({ payment_id: p2, amount_cents: 100, reason: "Goodwill refund", created_at: new Date("2026-11-19T07:00:00Z") });
  const i10 = await anInvoice({ issued: "2026-08-20", due: "2026-09-19", total: 4000, status: "open" });
  await aPayment(i10, 500, "2026-10-05T04:00:00Z"); // 23:00 on 4 October in Chicago: before the period
});

type Row = Record<string, unknown>;
async function rows(sql: string, bindings: readonly unknown[] = []): Promise<Row[]> {
  return (await db.raw(sql, bindings as never)).rows as Row[];
}

function nonZero<T extends { week: { key: string } }>(weeks: T[], pick: (w: T) => number): Record<string, number> {
  return Object.fromEntries(weeks.filter((w) => pick(w) !== 0).map((w) => [w.week.key, pick(w)]));
}

describe("colonies treated and grams per week", () => {
  it("equals the SQL count and dose sum of treated tallies at finished visits, per ISO week", async () => {
    const figure = await treatmentByWeek(db, PERIOD);
    const sql = await rows(
      `select to_char(v.service_date, 'IYYY-"W"IW') as week, count(*)::int as colonies, sum(t.dose_grams)::float8 as grams
         from tallies t join visits v on v.id = t.visit_id
        where v.status = 'done' and t.outcome = 'treated' and v.service_date >= ?::date and v.service_date <= ?::date
        group by 1`,
      [PERIOD.from, PERIOD.to],
    );
    expect(sql.length).toBeGreaterThan(1);
    expect(nonZero(figure.weeks, (w) => w.colonies)).toEqual(Object.fromEntries(sql.map((r) => [r.week, r.colonies])));
    expect(nonZero(figure.weeks, (w) => w.grams)).toEqual(Object.fromEntries(sql.map((r) => [r.week, r.grams])));

    const [total] = await rows(
      `select count(*)::int as colonies, sum(t.dose_grams)::float8 as grams
         from tallies t join visits v on v.id = t.visit_id
        where v.status = 'done' and t.outcome = 'treated' and v.service_date between ?::date and ?::date`,
      [PERIOD.from, PERIOD.to],
    );
    expect(figure.colonies).toBe(total.colonies);
    expect(figure.grams).toBe(total.grams);
    // And from the specs themselves: 18 colonies, 22.75 g.
    const inPeriod = VISITS.filter((v) => v.status === "done" && v.date >= PERIOD.from && v.date <= PERIOD.to).flatMap((v) => v.tallies.filter((t) => t.outcome === "treated"));
    expect([figure.colonies, figure.grams]).toEqual([inPeriod.length, inPeriod.reduce((g, t) => g + t.grams, 0)]);
  });

  it("has one entry per ISO week of the period, part weeks at the ends", async () => {
    const figure = await treatmentByWeek(db, PERIOD);
    const weeks = await rows(
      `select distinct to_char(d, 'IYYY-"W"IW') as week from generate_series(?::date, ?::date, interval '1 day') d order by 1`,
      [PERIOD.from, PERIOD.to],
    );
    expect(figure.weeks.map((w) => w.week.key)).toEqual(weeks.map((r) => r.week));
    expect(figure.weeks.at(-1)!.week).toMatchObject({ from: "2026-11-16", to: PERIOD.to, partial: true });
  });
});

describe("money per week", () => {
  it("equals SQL sums of invoice totals issued (void left out), payments received and refunds made, per week", async () => {
    const figure = await moneyByWeek(db, PERIOD);
    const invoiced = await rows(
      `select to_char(date_trunc('week', issued_on), 'IYYY-"W"IW') as week, sum(total_cents)::int as cents
         from invoices where status <> 'void' and issued_on between ?::date and ?::date group by 1`,
      [PERIOD.from, PERIOD.to],
    );
    // Instants between the business's midnights, rather than each timestamp turned into a date.
    const bounds = `>= (?::date)::timestamp at time zone '${ZONE}' and %COL% < (?::date + 1)::timestamp at time zone '${ZONE}'`;
    const received = await rows(
      `select to_char(date_trunc('week', received_at at time zone '${ZONE}'), 'IYYY-"W"IW') as week, sum(amount_cents)::int as cents
         from payments where received_at ${bounds.replace("%COL%", "received_at")} group by 1`,
      [PERIOD.from, PERIOD.to],
    );
    const refunded = await rows(
      `select to_char(date_trunc('week', created_at at time zone '${ZONE}'), 'IYYY-"W"IW') as week, sum(amount_cents)::int as cents
         from refunds where created_at ${bounds.replace("%COL%", "created_at")} group by 1`,
      [PERIOD.from, PERIOD.to],
    );
    const byWeek = (r: Row[]) => Object.fromEntries(r.map((x) => [x.week, x.cents]));
    expect(invoiced.length).toBeGreaterThan(1);
    expect(received.length).toBeGreaterThan(1);
    expect(refunded.length).toBe(1);
    expect(nonZero(figure.weeks, (w) => w.invoicedCents)).toEqual(byWeek(invoiced));
    expect(nonZero(figure.weeks, (w) => w.receivedCents)).toEqual(byWeek(received));
    expect(nonZero(figure.weeks, (w) => w.refundedCents)).toEqual(byWeek(refunded));
    expect(figure.invoicedCents).toBe(invoiced.reduce((n, r) => n + Number(r.cents), 0));
    expect(figure.receivedCents).toBe(received.reduce((n, r) => n + Number(r.cents), 0));
    // The payment at 21:00 on the last day in Chicago (03:00 UTC the next day) is in; the one at
    // 23:00 the evening before the first day is out.
    expect(figure.weeks.at(-1)!.receivedCents).toBe(20000);
    expect(figure.receivedCents).toBe(3000 + 20000 + 7000);
    expect(figure.invoicedCents).toBe(10000 + 20000 + 12345 + 9000 + 7000);
  });
});

describe("receivables by age at the end of the period", () => {
  it("equals a SQL CASE ladder over totals less payments received by the end of the last day", async () => {
    const figure = await receivablesAtEnd(db, PERIOD);
    const sql = await rows(
      `with owed as (
         select i.id, (?::date - i.due_on) as days,
                i.total_cents - coalesce((select sum(p.amount_cents) from payments p
                                           where p.invoice_id = i.id
                                             and p.received_at < (?::date + 1)::timestamp at time zone '${ZONE}'), 0) as cents
           from invoices i
          where i.status <> 'void' and i.issued_on <= ?::date)
       select case when days <= 0 then 'not_due' when days <= 30 then '1_30' when days <= 60 then '31_60'
                   when days <= 90 then '61_90' else 'over_90' end as bucket,
              count(*)::int as invoices, sum(cents)::int as cents
         from owed where cents > 0 group by 1`,
      [PERIOD.to, PERIOD.to, PERIOD.to],
    );
    const fromSql = Object.fromEntries(sql.map((r) => [r.bucket, [r.invoices, r.cents]]));
    expect(Object.keys(fromSql).sort()).toEqual(["1_30", "31_60", "61_90", "not_due", "over_90"]);
    for (const bucket of figure.buckets) expect([bucket.key, bucket.invoices, bucket.cents]).toEqual([bucket.key, ...(fromSql[bucket.key] ?? [0, 0])]);
    expect(figure.totalCents).toBe(sql.reduce((n, r) => n + Number(r.cents), 0));
    expect(figure.totalInvoices).toBe(sql.reduce((n, r) => n + Number(r.invoices), 0));
    // Paid after the period (9,000) is still owed at its end; 1–30 also holds 10,000 − 3,000.
    expect(figure.buckets.find((b) => b.key === "1_30")).toMatchObject({ invoices: 2, cents: 7000 + 9000 });
  });
});

describe("visits per crew-day", () => {
  it("equals the SQL count of finished visits and distinct run days per crew", async () => {
    const figure = await visitsPerCrewDayIn(db, PERIOD);
    const sql = await rows(
      `select c.name, count(distinct r.service_date)::int as crew_days, count(v.id)::int as visits
         from runs r join crews c on c.id = r.crew_id join stops s on s.run_id = r.id
         join visits v on v.id = s.visit_id and v.status = 'done'
        where r.service_date between ?::date and ?::date
        group by c.name order by c.name`,
      [PERIOD.from, PERIOD.to],
    );
    expect(sql.length).toBe(3);
    expect(figure.crews.map((c) => [c.crewName, c.crewDays, c.visits])).toEqual(sql.map((r) => [r.name, r.crew_days, r.visits]));
    for (const crew of figure.crews) expect(crew.average).toBeCloseTo(crew.visits / crew.crewDays, 12);
    const [all] = await rows(
      `select count(distinct (r.crew_id, r.service_date))::int as crew_days, count(*)::int as visits
         from runs r join stops s on s.run_id = r.id join visits v on v.id = s.visit_id
        where v.status = 'done' and r.service_date between ?::date and ?::date`,
      [PERIOD.from, PERIOD.to],
    );
    expect([figure.crewDays, figure.visits]).toEqual([all.crew_days, all.visits]);
    expect(figure.average).toBeCloseTo(Number(all.visits) / Number(all.crew_days), 12);
  });
});

describe("drive time per colony", () => {
  it("equals SQL planned drive seconds of worked runs over the colonies treated on them, per week", async () => {
    const figure = await driveMinutesPerColony(db, PERIOD);
    const sql = await rows(
      `with worked as (
         select r.id, r.service_date, r.drive_seconds from runs r
          where r.service_date between ?::date and ?::date
            and exists (select 1 from stops s join visits v on v.id = s.visit_id where s.run_id = r.id and v.status = 'done')),
       treated as (
         select s.run_id, count(*) as n from stops s join visits v on v.id = s.visit_id join tallies t on t.visit_id = v.id
          where v.status = 'done' and t.outcome = 'treated' group by s.run_id)
       select to_char(w.service_date, 'IYYY-"W"IW') as week, count(*)::int as runs,
              sum(w.drive_seconds)::int as seconds, coalesce(sum(t.n), 0)::int as colonies
         from worked w left join treated t on t.run_id = w.id group by 1`,
      [PERIOD.from, PERIOD.to],
    );
    expect(sql.length).toBe(4);
    const weeks = Object.fromEntries(figure.weeks.filter((w) => w.runs > 0).map((w) => [w.week.key, w]));
    expect(Object.keys(weeks).sort()).toEqual(sql.map((r) => String(r.week)).sort());
    for (const r of sql) {
      const w = weeks[String(r.week)];
      expect([w.runs, w.colonies]).toEqual([r.runs, r.colonies]);
      expect(w.driveMinutes).toBeCloseTo(Number(r.seconds) / 60, 9);
      if (Number(r.colonies) === 0) expect(w.minutesPerColony).toBeNull();
      else expect(w.minutesPerColony).toBeCloseTo(Number(r.seconds) / 60 / Number(r.colonies), 9);
    }
    const seconds = sql.reduce((n, r) => n + Number(r.seconds), 0);
    const colonies = sql.reduce((n, r) => n + Number(r.colonies), 0);
    expect(figure.minutesPerColony).toBeCloseTo(seconds / 60 / colonies, 9);
    // The cancelled-only run (4,000 s) and the runs outside the period do not count.
    expect(seconds).toBe(5400 + 2700 + 1800 + 3000 + 1500 + 2222);
  });
});

describe("mite load before and after by area", () => {
  it("equals SQL pooled washes per area, with the town and compass rules redone in SQL", async () => {
    const figure = await miteLoadByAreaIn(db, PERIOD);
    const sql = await rows(
      `with base as (select avg(start_lat)::float8 as lat, avg(start_lng)::float8 as lng from crews where active),
       yard_area as (
         select y.id,
                coalesce(
                  lower(trim(substring(y.address from ',([^,0-9]+),\\s*[A-Za-z]{2}\\s+[0-9]{5}$'))),
                  (array['North','North-east','East','South-east','South','South-west','West','North-west'])[
                    1 + floor(mod((degrees(atan2(
                          sin(radians(y.lng::float8 - b.lng)) * cos(radians(y.lat::float8)),
                          cos(radians(b.lat)) * sin(radians(y.lat::float8)) - sin(radians(b.lat)) * cos(radians(y.lat::float8)) * cos(radians(y.lng::float8 - b.lng))
                        )) + 360 + 22.5)::numeric, 360) / 45)::int] || ' of base') as area
           from yards y cross join base b)
       select a.area, case when v.round_number = 1 then 'before' else 'after' end as phase,
              count(*)::int as washes, sum(t.mites)::int as mites, sum(t.bees_sampled)::int as bees,
              sum(t.mites) * 100.0 / sum(t.bees_sampled) as per100
         from tallies t join visits v on v.id = t.visit_id join yard_area a on a.id = v.yard_id
        where v.status = 'done' and v.service_date between ?::date and ?::date
          and t.mites is not null and t.bees_sampled is not null
        group by 1, 2`,
      [PERIOD.from, PERIOD.to],
    );
    const fromSql = new Map(sql.map((r) => [`${String(r.area).toLowerCase()}|${r.phase}`, r]));
    expect(new Set(sql.map((r) => String(r.area).toLowerCase()))).toEqual(new Set(["dryden", "groton", "ithaca", "north-east of base", "south of base", "west of base"]));
    expect(figure.areas).toHaveLength(6);
    for (const area of figure.areas) {
      for (const phase of ["before", "after"] as const) {
        const r = fromSql.get(`${area.area.name.toLowerCase()}|${phase}`);
        const got = area[phase];
        if (!r) {
          expect([got.washes, got.mitesPer100]).toEqual([0, null]);
          continue;
        }
        expect([got.washes, got.mites, got.bees]).toEqual([r.washes, r.mites, r.bees]);
        expect(got.mitesPer100).toBeCloseTo(Number(r.per100), 9);
      }
    }
    const [all] = await rows(
      `select sum(t.mites) filter (where v.round_number = 1)::int as mites_before, sum(t.bees_sampled) filter (where v.round_number = 1)::int as bees_before,
              sum(t.mites) filter (where v.round_number > 1)::int as mites_after, sum(t.bees_sampled) filter (where v.round_number > 1)::int as bees_after
         from tallies t join visits v on v.id = t.visit_id
        where v.status = 'done' and v.service_date between ?::date and ?::date and t.mites is not null and t.bees_sampled is not null`,
      [PERIOD.from, PERIOD.to],
    );
    expect([figure.before.mites, figure.before.bees, figure.after.mites, figure.after.bees]).toEqual([all.mites_before, all.bees_before, all.mites_after, all.bees_after]);
    const before = (all.mites_before as number) * 100 / (all.bees_before as number);
    const after = (all.mites_after as number) * 100 / (all.bees_after as number);
    expect(figure.reductionPercent).toBeCloseTo(((before - after) * 100) / before, 9);
    // Dryden has two yards, one written "dryden".
    expect(figure.areas.find((a) => a.area.kind === "town" && a.area.name.toLowerCase() === "dryden")?.yards).toBe(2);
  });
});

describe("the whole dashboard", () => {
  it("puts the same figures in the headline as SQL totals", async () => {
    const dashboard = await seasonDashboard(db, PERIOD);
    const [h] = await rows(
      `select (select count(*) from tallies t join visits v on v.id = t.visit_id
                where v.status = 'done' and t.outcome = 'treated' and v.service_date between ?::date and ?::date)::int as colonies,
              (select sum(t.dose_grams) from tallies t join visits v on v.id = t.visit_id
                where v.status = 'done' and t.outcome = 'treated' and v.service_date between ?::date and ?::date)::float8 as grams,
              (select sum(total_cents) from invoices where status <> 'void' and issued_on between ?::date and ?::date)::int as invoiced,
              (select sum(amount_cents) from payments
                where (received_at at time zone '${ZONE}')::date between ?::date and ?::date)::int as received`,
      [PERIOD.from, PERIOD.to, PERIOD.from, PERIOD.to, PERIOD.from, PERIOD.to, PERIOD.from, PERIOD.to],
    );
    expect(dashboard.headline).toEqual({
      colonies: h.colonies,
      grams: h.grams,
      invoicedCents: h.invoiced,
      receivedCents: h.received,
      receivablesCents: dashboard.receivables.totalCents,
    });
    expect(dashboard.receivables.totalCents).toBe(12345 + 7000 + 9000 + 3500 + 8000 + 5000);
  });
});

describe("the page's loader", () => {
  async function cookieFor(userId: number): Promise<string> {
    const session = await sessionStorage().getSession();
    session.set("userId", String(userId));
    return (await sessionStorage().commitSession(session)).split(";")[0];
  }

  async function load(query: string, userId: number): Promise<{ status: number; data: unknown }> {
    const request = new Request(`http://localhost/office/dashboard${query}`, { headers: { Cookie: await cookieFor(userId) } });
    try {
      const result = (await loader({ request, params: {}, context: {} } as never)) as unknown;
      const wrapped = result as { type?: string; data?: unknown; init?: { status?: number } };
      if (wrapped && wrapped.type === "DataWithResponseInit") return { status: wrapped.init?.status ?? 200, data: wrapped.data };
      return { status: 200, data: result };
    } catch (thrown) {
      const wrapped = thrown as { init?: { status?: number }; status?: number };
      return { status: wrapped.init?.status ?? wrapped.status ?? 500, data: thrown };
    }
  }

  it("gives the office the dashboard of the period asked for", async () => {
    const { status, data } = await load(`?from=${PERIOD.from}&to=${PERIOD.to}`, officeUserId);
    expect(status).toBe(200);
    const body = data as { dashboard: SeasonDashboard; errors: unknown; input: unknown };
    expect(body.errors).toBeNull();
    expect(body.input).toEqual(PERIOD);
    expect(body.dashboard).toEqual(await seasonDashboard(db, PERIOD));
  });

  it("answers 400 with the message at the field for a period that ends before it starts", async () => {
    const { status, data } = await load(`?from=${PERIOD.to}&to=${PERIOD.from}`, officeUserId);
    expect(status).toBe(400);
    expect(data).toMatchObject({
      dashboard: null,
      errors: { to: "The last day must be on or after the first day." },
      input: { from: PERIOD.to, to: PERIOD.from },
    });
  });

  it("refuses a crew member", async () => {
    expect((await load("", crewUserId)).status).toBe(403);
  });
});
