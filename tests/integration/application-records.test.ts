import { execFileSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import Papa from "papaparse";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { recordsCsv, RECORD_CSV_COLUMNS } from "~/domain/application-records-csv";
import { defaultBusinessSettings } from "~/domain/settings";
import { applicationRecords, readRecordQuery, type RecordFilters } from "~/models/application-records.server";
import { saveBusinessSettings } from "~/models/settings.server";
import { confirmRunSafetyCheck, confirmSupersOff, finishVisit, recordAirTemperature, recordTally, type FinishResult } from "~/models/tallies.server";
import { renderApplicationRecordsPdf } from "~/services/application-records-pdf.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { ALL_SAFE, aCrew, aKey, aStop, type TestCrew, type TestStop } from "./crew-fixtures";
import { resetDatabase } from "./reset-database";

// Application records over a period built through the crew's own functions (safety check,
// supers off, one tally per colony, finish): every expected figure is recomputed here with
// SQL over the tally rows, or worked out by hand from the colonies the test made.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});

const FROM = "2026-11-02";
const TO = "2026-11-20";
const PERIOD: RecordFilters = { from: FROM, to: TO, crewId: null, customerId: null };
const TIME_ZONE = "America/Chicago"; // not the default, so the clock times must follow settings
const PRODUCT = "Records test product";
const REGISTRATION = "TEST-REG-4471";

let north: TestCrew;
let south: TestCrew;
const stops: Record<string, TestStop> = {};
const finished: Record<string, FinishResult> = {};

type Plan = {
  crew: () => TestCrew;
  date: string;
  colonies: number;
  broodBoxes?: (i: number) => number;
  skip?: string[];
  /** Which crew member (index) records each colony. */
  recorder?: (label: string) => number;
  finisher?: number;
  weather?: string | null;
  /** The air temperature the crew read at the yard, °C. */
  airTempC?: number;
  finish: boolean;
  customerOf?: string;
};

const PLANS: Record<string, Plan> = {
  // In the period, finished.
  v1: { crew: () => north, date: "2026-11-02", colonies: 3, finish: true, weather: "Frosty, still, -1 °C", airTempC: -1 },
  v2: {
    crew: () => north,
    date: "2026-11-02",
    colonies: 5,
    broodBoxes: (i) => (i % 2 === 1 ? 2 : 1),
    skip: ["H2"],
    recorder: (label) => (label === "H4" || label === "H5" ? 1 : 0),
    finish: true,
    weather: null,
  },
  v3: { crew: () => south, date: "2026-11-09", colonies: 4, broodBoxes: () => 2, skip: ["H1", "H4"], recorder: () => 1, finisher: 1, finish: true, weather: "Overcast\nwind NW 10 km/h", airTempC: 12.5, customerOf: "v1" },
  v4: { crew: () => south, date: "2026-11-15", colonies: 2, skip: ["H1", "H2"], finish: true, weather: "Rain later" },
  v5: { crew: () => north, date: TO, colonies: 1, broodBoxes: () => 3, finish: true, weather: "Mild" },
  // Outside the period, finished.
  before: { crew: () => north, date: "2026-11-01", colonies: 2, finish: true },
  after: { crew: () => south, date: "2026-11-21", colonies: 2, finish: true },
  // In the period, not finished.
  open: { crew: () => north, date: "2026-11-05", colonies: 2, finish: false },
};
const IN_PERIOD = ["v1", "v2", "v3", "v4", "v5"];

async function work(name: string, plan: Plan) {
  const crew = plan.crew();
  const stop = await aStop(db, crew, { date: plan.date, colonies: plan.colonies, broodBoxes: plan.broodBoxes ?? (() => 1), rounds: 1 });
  stops[name] = stop;
  await db("yards").where({ id: stop.yardId }).update({ name: `Records yard ${name.toUpperCase()}` });
  if (plan.customerOf) await db("yards").where({ id: stop.yardId }).update({ customer_id: stops[plan.customerOf].customerId });
  const member = (i: number) => crew.members[i].id;
  await confirmRunSafetyCheck(db, { runId: stop.runId, crewId: crew.id, userId: member(0), items: ALL_SAFE });
  const skip = plan.skip ?? [];
  if (skip.length < stop.labels.length) {
    await confirmSupersOff(db, { visitId: stop.visitId, crewId: crew.id, userId: member(0), idempotencyKey: aKey("supers") });
  }
  for (const label of stop.labels) {
    const skipped = skip.includes(label);
    await recordTally(db, {
      visitId: stop.visitId,
      crewId: crew.id,
      userId: member(plan.recorder?.(label) ?? 0),
      idempotencyKey: aKey("tally"),
      colonyLabel: label,
      outcome: skipped ? "skipped" : "treated",
      skipReason: skipped ? "dead_out" : null,
      recordedAt: new Date(),
    });
  }
  if (plan.airTempC !== undefined) {
    await recordAirTemperature(db, { visitId: stop.visitId, crewId: crew.id, userId: member(0), idempotencyKey: aKey("air"), airTempC: plan.airTempC });
  }
  if (plan.finish) {
    finished[name] = await finishVisit(db, {
      visitId: stop.visitId,
      crewId: crew.id,
      userId: member(plan.finisher ?? 0),
      finishKey: aKey("finish"),
      weatherNote: plan.weather ?? null,
    });
  }
}

beforeAll(async () => {
  await resetDatabase(db);
  const [owner] = await db("users").insert({ email: "owner.records@example.test", password_hash: "x", role: "owner", name: "Owner" }).returning("id");
  await saveBusinessSettings(db, { ...defaultBusinessSettings, productName: PRODUCT, productRegistrationNumber: REGISTRATION, timeZone: TIME_ZONE }, Number(owner.id));
  north = await aCrew(db, "Records North", "LIC-NORTH-1");
  south = await aCrew(db, "Records South", "LIC-SOUTH-1");
  for (const [name, plan] of Object.entries(PLANS)) await work(name, plan);
  // A visit in the period that nobody has started.
  stops.untouched = await aStop(db, south, { date: "2026-11-12", colonies: 3, rounds: 1 });
  // Text that CSV must quote, and a customer anonymised after their visit.
  await db("customers").where({ id: stops.v1.customerId }).update({ name: `O'Hara, "Bee" & Sons` });
  await db("customers")
    .where({ id: stops.v5.customerId })
    .update({ name: "Anonymised customer", email: "anonymised@invalid.example", address_line: null, city: null, region: null, postal_code: null, anonymised_at: new Date() });
});

type Expected = { visitId: number; crewId: number; customerId: number; colonies: number; grams: number; startTime: string; finishTime: string };

/** Finished visits of the period, totalled straight from the tally rows. */
async function expectedFromTallies(filters: RecordFilters): Promise<Expected[]> {
  const { rows } = await db.raw<{ rows: { visit_id: string; crew_id: string; customer_id: string; colonies: number; grams: string; start_time: string; finish_time: string }[] }>(
    `select v.id as visit_id, r.crew_id, y.customer_id,
       count(t.id) filter (where t.outcome = 'treated')::int as colonies,
       coalesce(sum(t.dose_grams) filter (where t.outcome = 'treated'), 0)::text as grams,
       to_char(coalesce(v.started_at, v.supers_confirmed_at) at time zone ?, 'HH24:MI') as start_time,
       to_char(v.finished_at at time zone ?, 'HH24:MI') as finish_time
     from visits v
     join yards y on y.id = v.yard_id
     join stops s on s.visit_id = v.id
     join runs r on r.id = s.run_id
     left join tallies t on t.visit_id = v.id
     where v.status = 'done' and v.service_date >= ? and v.service_date <= ?
       and (?::bigint is null or r.crew_id = ?::bigint) and (?::bigint is null or y.customer_id = ?::bigint)
     group by v.id, r.crew_id, y.customer_id
     order by v.id`,
    [TIME_ZONE, TIME_ZONE, filters.from, filters.to, filters.crewId, filters.crewId, filters.customerId, filters.customerId],
  );
  return rows.map((r) => ({
    visitId: Number(r.visit_id),
    crewId: Number(r.crew_id),
    customerId: Number(r.customer_id),
    colonies: r.colonies,
    grams: Number(r.grams),
    startTime: r.start_time,
    finishTime: r.finish_time,
  }));
}

async function recordsAsExpected(filters: RecordFilters): Promise<Expected[]> {
  const records = await applicationRecords(db, filters);
  return records.rows
    .map((r) => ({ visitId: r.visitId, crewId: r.crewId!, customerId: r.customerId, colonies: r.coloniesTreated, grams: r.gramsApplied, startTime: r.startTime!, finishTime: r.finishTime! }))
    .sort((a, b) => a.visitId - b.visitId);
}

describe("application records", () => {
  it("have one line per finished visit of the period, with colonies and grams exactly as the tallies total", async () => {
    const expected = await expectedFromTallies(PERIOD);
    const records = await applicationRecords(db, PERIOD);

    expect(records.rows).toHaveLength(IN_PERIOD.length);
    expect(expected.map((e) => e.visitId)).toEqual(IN_PERIOD.map((n) => stops[n].visitId).sort((a, b) => a - b));
    expect(await recordsAsExpected(PERIOD)).toEqual(expected);

    // Worked by hand from the colonies made above (1 g per brood box, the default rate):
    // v2 treats H1, H3, H5 (1 box) and H4 (2 boxes), H2 skipped; v3 treats H2, H3 (2 boxes each);
    // v4 skips both; v5 treats one colony of 3 boxes.
    const byName = (name: string) => records.rows.find((r) => r.visitId === stops[name].visitId)!;
    expect([byName("v1"), byName("v2"), byName("v3"), byName("v4"), byName("v5")].map((r) => [r.coloniesTreated, r.coloniesSkipped, r.gramsApplied])).toEqual([
      [3, 0, 3],
      [4, 1, 5],
      [2, 2, 4],
      [0, 2, 0],
      [1, 0, 3],
    ]);
    // What the finish answered agrees with the records.
    for (const name of IN_PERIOD) {
      expect({ treated: byName(name).coloniesTreated, grams: byName(name).gramsApplied }).toEqual({ treated: finished[name].treated, grams: finished[name].grams });
    }

    // Totals over the period.
    expect(records.totals).toEqual({
      visits: expected.length,
      colonies: expected.reduce((s, e) => s + e.colonies, 0),
      grams: Number(expected.reduce((s, e) => s + Math.round(e.grams * 100), 0)) / 100,
    });
    // Not the booking's count: v2 was booked for 5 colonies, 4 were treated.
    const booking = await db("bookings").where({ id: stops.v2.bookingId }).first("colonies");
    expect(booking!.colonies).not.toBe(byName("v2").coloniesTreated);

    // Outside the period or not finished: no record.
    const ids = records.rows.map((r) => r.visitId);
    for (const name of ["before", "after", "open", "untouched"]) expect(ids).not.toContain(stops[name].visitId);
  });

  it("carry the place, product, applicator and weather of each visit", async () => {
    const records = await applicationRecords(db, PERIOD);
    const byName = (name: string) => records.rows.find((r) => r.visitId === stops[name].visitId)!;
    for (const name of IN_PERIOD) {
      const row = byName(name);
      const yard = await db("yards").where({ id: stops[name].yardId }).first();
      const customer = await db("customers").where({ id: row.customerId }).first();
      expect(row).toMatchObject({
        serviceDate: PLANS[name].date,
        yardName: yard!.name,
        yardAddress: yard!.address,
        lat: Number(yard!.lat),
        lng: Number(yard!.lng),
        customerName: customer!.name,
        productName: PRODUCT,
        productRegistrationNumber: REGISTRATION,
        timeZone: TIME_ZONE,
        crewName: PLANS[name].crew() === north ? "Records North" : "Records South",
        weatherNote: PLANS[name].weather ?? null,
      });
      expect(row.startTime).toMatch(/^\d{2}:\d{2}$/);
      expect(Date.parse(row.startedAt!)).toBeLessThanOrEqual(Date.parse(row.finishedAt!));
    }
    // v3 belongs to v1's customer; the address is put together from the customer's fields.
    expect(byName("v3").customerId).toBe(stops.v1.customerId);
    const address = await db("customers").where({ id: stops.v1.customerId }).first("address_line");
    expect(byName("v1").customerAddress).toBe(`${address!.address_line}, Ithaca, NY, 14850`);
    // The anonymised customer stays, with what anonymising left.
    expect(byName("v5")).toMatchObject({ customerName: "Anonymised customer", customerAddress: "", customerAnonymised: true });
    expect(byName("v1").customerAnonymised).toBe(false);

    // Applicators: who recorded the treated tallies (both members on v2), else who finished (v4).
    const names = (name: string) => byName(name).applicators;
    expect(names("v1")).toEqual([{ name: north.members[0].name, licence: "LIC-NORTH-1" }]);
    expect(names("v2")).toEqual([
      { name: north.members[0].name, licence: "LIC-NORTH-1" },
      { name: north.members[1].name, licence: null },
    ]);
    expect(names("v3")).toEqual([{ name: south.members[1].name, licence: null }]);
    expect(names("v4")).toEqual([{ name: south.members[0].name, licence: "LIC-SOUTH-1" }]);
    // Recomputed from the tally rows for every visit with a treatment.
    for (const name of ["v1", "v2", "v3", "v5"]) {
      const { rows } = await db.raw<{ rows: { name: string }[] }>(
        "select distinct u.name from tallies t join users u on u.id = t.recorded_by where t.visit_id = ? and t.outcome = 'treated' order by u.name",
        [stops[name].visitId],
      );
      expect(names(name).map((a) => a.name).sort()).toEqual(rows.map((r) => r.name));
    }
  });

  it("keep the product a visit was finished with when settings change later", async () => {
    const owner = await db("users").where({ role: "owner" }).first("id");
    await saveBusinessSettings(db, { ...defaultBusinessSettings, productName: "Another product", productRegistrationNumber: "REG-OTHER-2", timeZone: TIME_ZONE }, Number(owner!.id));
    try {
      const records = await applicationRecords(db, PERIOD);
      expect(records.rows.length).toBeGreaterThan(0);
      for (const row of records.rows) expect([row.productName, row.productRegistrationNumber]).toEqual([PRODUCT, REGISTRATION]);
      // A visit finished before products were kept on the visit falls back to the settings.
      await db("visits").where({ id: stops.v1.visitId }).update({ product_name: null, product_registration_number: null });
      const again = await applicationRecords(db, PERIOD);
      expect(again.rows.find((r) => r.visitId === stops.v1.visitId)).toMatchObject({ productName: "Another product", productRegistrationNumber: "REG-OTHER-2" });
      await db("visits").where({ id: stops.v1.visitId }).update({ product_name: PRODUCT, product_registration_number: REGISTRATION });
    } finally {
      await saveBusinessSettings(db, { ...defaultBusinessSettings, productName: PRODUCT, productRegistrationNumber: REGISTRATION, timeZone: TIME_ZONE }, Number(owner!.id));
    }
  });

  it("narrow by crew and by customer", async () => {
    for (const filters of [
      { ...PERIOD, crewId: north.id },
      { ...PERIOD, crewId: south.id },
      { ...PERIOD, customerId: stops.v1.customerId },
      { ...PERIOD, crewId: south.id, customerId: stops.v1.customerId },
      { ...PERIOD, customerId: stops.v5.customerId },
    ]) {
      const expected = await expectedFromTallies(filters);
      expect(expected.length).toBeGreaterThan(0);
      const records = await applicationRecords(db, filters);
      expect(await recordsAsExpected(filters)).toEqual(expected);
      expect(records.totals.visits).toBe(expected.length);
      expect(records.totals.colonies).toBe(expected.reduce((s, e) => s + e.colonies, 0));
    }
    const ids = async (filters: RecordFilters) => (await applicationRecords(db, filters)).rows.map((r) => r.visitId).sort((a, b) => a - b);
    const idsOf = (...names: string[]) => names.map((n) => stops[n].visitId).sort((a, b) => a - b);
    expect(await ids({ ...PERIOD, crewId: north.id })).toEqual(idsOf("v1", "v2", "v5"));
    expect(await ids({ ...PERIOD, crewId: south.id })).toEqual(idsOf("v3", "v4"));
    expect(await ids({ ...PERIOD, customerId: stops.v1.customerId })).toEqual(idsOf("v1", "v3"));
    expect(await ids({ ...PERIOD, crewId: north.id, customerId: stops.v1.customerId })).toEqual(idsOf("v1"));
    // The period's ends are included; a one-day period holds that day's visits only.
    expect(await ids({ ...PERIOD, from: TO, to: TO })).toEqual(idsOf("v5"));
    expect(await ids({ ...PERIOD, from: "2026-10-01", to: "2026-11-30" })).toEqual(idsOf("v1", "v2", "v3", "v4", "v5", "before", "after"));
  });

  it("page 50 at a time by default and sort, with totals over every page", async () => {
    const all = await applicationRecords(db, PERIOD);
    const page1 = await applicationRecords(db, PERIOD, { sort: "grams", dir: "desc", page: 1, pageSize: 2 });
    const page3 = await applicationRecords(db, PERIOD, { sort: "grams", dir: "desc", page: 3, pageSize: 2 });
    const beyond = await applicationRecords(db, PERIOD, { sort: "grams", dir: "desc", page: 99, pageSize: 2 });
    const page2 = await applicationRecords(db, PERIOD, { sort: "grams", dir: "desc", page: 2, pageSize: 2 });
    // Grams per visit worked by hand: v2 5, v3 4, v1 3, v5 3, v4 0.
    expect(page1.rows.map((r) => r.gramsApplied)).toEqual([5, 4]);
    expect(page2.rows.map((r) => r.gramsApplied)).toEqual([3, 3]);
    expect(page3.rows.map((r) => r.gramsApplied)).toEqual([0]);
    expect(beyond.paging?.page).toBe(3);
    for (const page of [page1, page2, page3]) expect(page.totals).toEqual(all.totals);
    const byDate = await applicationRecords(db, PERIOD, { sort: "date", dir: "asc", page: 1, pageSize: 50 });
    const dates = byDate.rows.map((r) => r.serviceDate);
    expect(dates).toEqual([...dates].sort());
    expect(byDate.rows).toHaveLength(IN_PERIOD.length);

    const query = await readRecordQuery(db, new URLSearchParams(`from=${FROM}&to=${TO}`), "2026-12-02");
    expect(query.ok && query.paging).toMatchObject({ page: 1, pageSize: 50, sort: "date", dir: "desc" });
  });

  it("check the filters and say what is wrong at the field", async () => {
    const read = (search: string) => readRecordQuery(db, new URLSearchParams(search), "2026-12-02");
    const defaults = await read("");
    expect(defaults.ok && defaults.filters).toEqual({ from: "2026-01-01", to: "2026-12-02", crewId: null, customerId: null });

    const cases: [string, string, RegExp][] = [
      ["from=2026-02-30", "from", /not a day of the calendar/],
      ["from=11/02/2026&to=2026-01-05", "from", /YYYY-MM-DD/],
      ["to=2026-13-01", "to", /not a day of the calendar/],
      [`from=${TO}&to=${FROM}`, "to", /on or after the first date/],
      ["to=2025-12-31", "to", /on or after the first date \(2026-01-01\)/],
      ["crew=999999", "crew", /no such crew/],
      ["crew=north", "crew", /Choose a crew/],
      [`customer=${stops.untouched.customerId}`, "customer", /no records for that customer/],
    ];
    for (const [search, field, message] of cases) {
      const result = await read(search);
      expect(result.ok, search).toBe(false);
      if (!result.ok) {
        expect(result.errors[field], search).toMatch(message);
        expect(Object.keys(result.errors), search).toEqual([field]);
      }
    }
    // Every wrong field is named at once.
    const several = await read("from=2026-02-30&crew=999999&customer=x");
    expect(several.ok ? {} : several.errors).toEqual({
      from: expect.stringMatching(/not a day of the calendar/),
      crew: expect.stringMatching(/no such crew/),
      customer: expect.stringMatching(/Choose a customer/),
    });
    const good = await read(`from=${FROM}&to=${TO}&crew=${south.id}&customer=${stops.v1.customerId}`);
    expect(good.ok && good.filters).toEqual({ from: FROM, to: TO, crewId: south.id, customerId: stops.v1.customerId });
    // The filter lists: every crew, and only customers with a finished visit.
    expect(good.options.crews.map((c) => c.id).sort()).toEqual([north.id, south.id].sort());
    expect(good.options.customers.map((c) => c.id)).not.toContain(stops.untouched.customerId);
    expect(good.options.customers.map((c) => c.id)).toContain(stops.v5.customerId);
  });

  it("write a CSV that parses back to the same values", async () => {
    const records = await applicationRecords(db, PERIOD);
    const csv = recordsCsv(records.rows);
    const parsed = Papa.parse<Record<string, string>>(csv, { header: true, skipEmptyLines: false });
    expect(parsed.errors).toEqual([]);
    expect(parsed.meta.fields).toEqual(RECORD_CSV_COLUMNS.map((c) => c.header));
    expect(parsed.data).toHaveLength(records.rows.length);
    const expected = await expectedFromTallies(PERIOD);
    for (const line of parsed.data) {
      const visitId = Number(line.Visit);
      const want = expected.find((e) => e.visitId === visitId)!;
      const row = records.rows.find((r) => r.visitId === visitId)!;
      const customer = await db("customers").where({ id: want.customerId }).first("name");
      expect(line).toMatchObject({
        Date: row.serviceDate,
        Start: want.startTime,
        Finish: want.finishTime,
        "Time zone": TIME_ZONE,
        Customer: customer!.name,
        Yard: row.yardName,
        "Colonies treated": String(want.colonies),
        "Grams applied": want.grams.toFixed(2),
        Product: PRODUCT,
        "Registration number": REGISTRATION,
        Weather: row.weatherNote ?? "",
        "Air temperature (°C)": String(PLANS[IN_PERIOD.find((n) => stops[n].visitId === visitId)!].airTempC ?? ""),
      });
      expect(line.Date).toMatch(/^\d{4}-\d{2}-\d{2}$/);
      expect(Number(line.Latitude)).toBe(row.lat);
      expect(Number(line.Longitude)).toBe(row.lng);
    }
    const v2 = parsed.data.find((l) => Number(l.Visit) === stops.v2.visitId)!;
    expect(v2.Applicator).toBe(`${north.members[0].name}; ${north.members[1].name}`);
    expect(v2["Applicator licence"]).toBe("LIC-NORTH-1; none on file");
    const v1 = parsed.data.find((l) => Number(l.Visit) === stops.v1.visitId)!;
    expect(v1.Customer).toBe(`O'Hara, "Bee" & Sons`);
    expect(v1["Applicator licence"]).toBe("LIC-NORTH-1");
    expect(parsed.data.find((l) => Number(l.Visit) === stops.v3.visitId)!.Weather).toBe("Overcast\nwind NW 10 km/h");
    expect(v1["Air temperature (°C)"]).toBe("-1");
    expect(parsed.data.find((l) => Number(l.Visit) === stops.v3.visitId)!["Air temperature (°C)"]).toBe("12.5");
    expect(v2["Air temperature (°C)"]).toBe("");
  });

  it("render a PDF with one table row per visit", async () => {
    const records = await applicationRecords(db, PERIOD);
    const pdf = await renderApplicationRecordsPdf({
      businessName: "Records Test Apiary Services",
      period: { from: FROM, to: TO },
      filterNames: { crew: "All crews", customer: "All customers" },
      productName: records.productName,
      productRegistrationNumber: records.productRegistrationNumber,
      timeZone: records.timeZone,
      rows: records.rows,
      totals: records.totals,
      preparedOn: "2026-12-02",
    });
    const dir = mkdtempSync(join(tmpdir(), "records-pdf-"));
    try {
      const file = join(dir, "records.pdf");
      writeFileSync(file, pdf);
      const text = execFileSync("pdftotext", ["-layout", file, "-"], { encoding: "utf8" });
      const lines = text.split("\n");
      // A data row starts with its ISO date in the first column.
      const dataRows = lines.filter((l) => /^\s*\d{4}-\d{2}-\d{2}\b/.test(l));
      expect(dataRows).toHaveLength(records.rows.length);
      for (const row of records.rows) {
        const yard = new RegExp(`\\b${row.yardName}\\b`);
        expect(lines.filter((l) => l.includes(row.serviceDate) && yard.test(l)), row.yardName).toHaveLength(1);
      }
      for (const name of ["before", "after", "open", "untouched"]) {
        const yard = await db("yards").where({ id: stops[name].yardId }).first("name");
        expect(text).not.toMatch(new RegExp(`\\b${yard!.name}\\b`));
      }
      expect(text).toContain(PRODUCT);
      expect(text).toContain(REGISTRATION);
      expect(text).toContain(`${FROM} to ${TO}`);
      expect(text).toMatch(new RegExp(`Totals\\s+${records.totals.visits} visits\\s+${records.totals.colonies}\\s+${records.totals.grams.toFixed(2)}`));
      expect(text).toMatch(/two years/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it("repeat the table's headings on every page of a long report", async () => {
    const records = await applicationRecords(db, PERIOD);
    // 60 copies of the period's lines make several pages.
    const many = Array.from({ length: 12 }, () => records.rows).flat();
    const pdf = await renderApplicationRecordsPdf({
      businessName: "Records Test Apiary Services",
      period: { from: FROM, to: TO },
      filterNames: { crew: "All crews", customer: "All customers" },
      productName: PRODUCT,
      productRegistrationNumber: REGISTRATION,
      timeZone: TIME_ZONE,
      rows: many,
      totals: records.totals,
      preparedOn: "2026-12-02",
    });
    const dir = mkdtempSync(join(tmpdir(), "records-pdf-"));
    try {
      const file = join(dir, "records.pdf");
      writeFileSync(file, pdf);
      const pages = execFileSync("pdftotext", ["-layout", file, "-"], { encoding: "utf8" }).split("\f").filter((p) => p.trim() !== "");
      expect(pages.length).toBeGreaterThan(1);
      const rowsOn = pages.map((p) => p.split("\n").filter((l) => /^\s*\d{4}-\d{2}-\d{2}\b/.test(l)).length);
      expect(rowsOn.reduce((a, b) => a + b, 0)).toBe(many.length);
      for (const [i, page] of pages.entries()) {
        if (rowsOn[i] > 0) expect(page, `page ${i + 1}`).toMatch(/Date \/ time\s+Customer\s+Yard and location/);
        expect(page).toContain(`Page ${i + 1} of ${pages.length}`);
      }
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
