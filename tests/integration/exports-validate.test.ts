import { execFile } from "node:child_process";
import { mkdtemp, rm, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import ICAL from "ical.js";
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { addCalendarDays } from "~/domain/courses";
import { runToGpx } from "~/domain/exports/gpx";
import { runToIcs } from "~/domain/exports/ics";
import { defaultBusinessSettings } from "~/domain/settings";
import { planServiceDay, publishRun } from "~/models/day-plan.server";
import { runExportForUser } from "~/models/run-exports.server";
import { loader as gpxLoader } from "~/routes/api/run-gpx";
import { loader as icsLoader } from "~/routes/api/run-ics";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { sessionStorage } from "~/services/session.server";
import { resetDatabase } from "./reset-database";

// GPX output is checked with xmllint (Debian's libxml2-utils) against the GPX 1.1 XML
// Schema kept in tests/fixtures/gpx (see SOURCE.md there); iCalendar output is read back
// with ical.js, a general-purpose RFC 5545 parser from the npm registry.

const run = promisify(execFile);
const XSD = path.resolve("tests/fixtures/gpx/gpx-1.1.xsd");
let workDir = "";

beforeAll(async () => {
  workDir = await mkdtemp(path.join(tmpdir(), "varroute-exports-"));
});
afterAll(async () => {
  await rm(workDir, { recursive: true, force: true });
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

async function xmllint(xml: string, name: string): Promise<{ ok: boolean; output: string }> {
  const file = path.join(workDir, name);
  await writeFile(file, xml, "utf8");
  try {
    const { stdout, stderr } = await run("xmllint", ["--noout", "--schema", XSD, file]);
    return { ok: true, output: stdout + stderr };
  } catch (error) {
    const e = error as { stdout?: string; stderr?: string };
    return { ok: false, output: `${e.stdout ?? ""}${e.stderr ?? ""}` };
  }
}

const day = addCalendarDays(dateInZone(new Date(), defaultBusinessSettings.timeZone), 5);
let seq = 0;

async function aUser(role: "crew" | "dispatcher" | "owner" | "office" | "customer") {
  seq++;
  const [user] = await db("users").insert({ email: `${role}${seq}@example.test`, password_hash: "x", role, name: `${role} ${seq}` }).returning("id");
  return Number(user.id);
}

async function aPlannedRun() {
  const dispatcher = await aUser("dispatcher");
  const [crew] = await db("crews")
    .insert({ name: "Crew <North> & Co", start_label: "Shop & yard", start_lat: 42.44, start_lng: -76.5, end_label: "Lock-up", end_lat: 42.49, end_lng: -76.3, vaporizers: 2 })
    .returning("id");
  const [otherCrew] = await db("crews").insert({ name: "Crew South", start_label: "Depot", start_lat: 42.3, start_lng: -76.6, vaporizers: 1, active: false }).returning("id");
  const member = await aUser("crew");
  const outsider = await aUser("crew");
  await db("crew_members").insert([
    { crew_id: crew.id, user_id: member },
    { crew_id: otherCrew.id, user_id: outsider },
  ]);
  const [customer] = await db("customers").insert({ name: "Zoë O'Brien, Esq.", email: "zoe@example.test" }).returning("id");
  const yards = [
    { name: "Hill & Dale <upper>", lat: 42.46, lng: -76.45, colonies: 4, notes: "Gate code 12; dogs, friendly\nPark by the barn \\ not the lane" },
    { name: "Émile's Bienenstand 蜂場 with a very long name that goes on and on to need folding", lat: 42.52, lng: -76.36, colonies: 2, notes: "" },
    { name: "Varna Orchard", lat: 42.45, lng: -76.42, colonies: 6, notes: "Ring the bell" },
  ];
  for (const y of yards) {
    const [yard] = await db("yards")
      .insert({ customer_id: customer.id, name: y.name, lat: y.lat, lng: y.lng, colony_count: y.colonies, brood_boxes_per_colony: 2, access_notes: y.notes, address: "3 Orchard Rd, Varna; NY" })
      .returning("id");
    const [course] = await db("courses").insert({ yard_id: yard.id, brood_status: "broodless", rounds_planned: 1, interval_days: 0 }).returning("id");
    await db("visits").insert({ course_id: course.id, yard_id: yard.id, round_number: 1, service_date: day, colonies_expected: y.colonies });
  }
  await planServiceDay(db, { date: day, actorUserId: dispatcher, keepLocked: true, travel: { osrmUrl: null } });
  const runRow = await db("runs").where({ crew_id: crew.id, service_date: day }).first();
  return { runId: Number(runRow!.id), dispatcher, member, outsider };
}

async function cookieFor(userId: number): Promise<string> {
  const session = await sessionStorage().getSession();
  session.set("userId", String(userId));
  return (await sessionStorage().commitSession(session)).split(";")[0];
}

type Loader = (args: never) => Promise<Response>;
async function callLoader(loader: Loader, runId: number | string, userId: number | null): Promise<Response | { status: number }> {
  const headers = new Headers();
  if (userId !== null) headers.set("Cookie", await cookieFor(userId));
  const request = new Request(`http://localhost/api/runs/${runId}/x`, { headers });
  try {
    return await loader({ request, params: { runId: String(runId) }, context: {} } as never);
  } catch (thrown) {
    if (thrown instanceof Response) return thrown;
    const init = (thrown as { init?: { status?: number } }).init;
    return { status: init?.status ?? 500 };
  }
}

describe("run exports", () => {
  it("makes GPX that validates against the GPX 1.1 schema, and the schema catches a broken document", async () => {
    const { runId, dispatcher } = await aPlannedRun();
    const exported = await runExportForUser(db, runId, { id: String(dispatcher), role: "dispatcher" });
    expect(exported!.stops).toHaveLength(3);
    const gpx = runToGpx(exported!);
    const valid = await xmllint(gpx, "run.gpx");
    expect(valid.output).toMatch(/validates/);
    expect(valid.ok).toBe(true);

    // The same document with a waypoint's name before its time breaks the schema's sequence.
    const broken = gpx.replace(/(<time>[^<]+<\/time>)\n(\s*)(<name>[^<]+<\/name>)/, "$3\n$2$1");
    expect(broken).not.toBe(gpx);
    const invalid = await xmllint(broken, "broken.gpx");
    expect(invalid.ok).toBe(false);
    expect(invalid.output).toMatch(/fails to validate/);
  });

  it("makes iCalendar that a general-purpose parser reads back: one event per stop with its times and summary", async () => {
    const { runId, dispatcher } = await aPlannedRun();
    const exported = (await runExportForUser(db, runId, { id: String(dispatcher), role: "owner" }))!;
    const ics = runToIcs(exported);
    const calendar = new ICAL.Component(ICAL.parse(ics));
    expect(calendar.getFirstPropertyValue("version")).toBe("2.0");
    expect(calendar.getFirstPropertyValue("prodid")).toBe("-//Varroute//Run export//EN");
    const events = calendar.getAllSubcomponents("vevent").map((c) => new ICAL.Event(c));
    expect(events).toHaveLength(exported.stops.length);
    events.forEach((event, i) => {
      const stop = exported.stops[i];
      expect(event.uid).toBe(`run-${runId}-visit-${stop.visitId}@varroute`);
      expect(event.startDate.toJSDate().getTime()).toBe(Math.floor(stop.arriveAt.getTime() / 1000) * 1000);
      expect(event.endDate.toJSDate().getTime()).toBe(Math.floor(stop.leaveAt.getTime() / 1000) * 1000);
      expect(event.startDate.zone.tzid).toBe("UTC");
      expect(event.summary).toBe(`${i + 1}. ${stop.yardName}: ${stop.colonies} colonies, ${stop.doseGrams.toFixed(2)} g`);
      expect(event.location).toBe(`${stop.yardName}, 3 Orchard Rd, Varna; NY`);
      expect(event.description).toContain(`Access notes: ${stop.accessNotes.trim() || "none"}`);
      expect(event.description).toContain(`Dose: ${stop.doseGrams.toFixed(2)} g Oxalic acid dihydrate`);
      expect(event.component.getFirstPropertyValue("geo")).toEqual([stop.lat, stop.lng]);
    });
  });

  it("serves the files to the dispatcher, to the crew only once published, and 404 to everyone else", async () => {
    const { runId, dispatcher, member, outsider } = await aPlannedRun();
    const owner = await aUser("owner");
    const office = await aUser("office");
    const customer = await aUser("customer");

    const gpx = (await callLoader(gpxLoader, runId, dispatcher)) as Response;
    expect(gpx.status).toBe(200);
    expect(gpx.headers.get("Content-Type")).toBe("application/gpx+xml; charset=utf-8");
    expect(gpx.headers.get("Content-Disposition")).toBe(`attachment; filename="varroute-crew-north-co-${day}.gpx"`);
    expect(await gpx.text()).toMatch(/^<\?xml version="1.0" encoding="UTF-8"\?>\n<gpx version="1.1" creator="Varroute"/);
    const ics = (await callLoader(icsLoader, runId, owner)) as Response;
    expect(ics.status).toBe(200);
    expect(ics.headers.get("Content-Type")).toBe("text/calendar; charset=utf-8");
    expect(ics.headers.get("Content-Disposition")).toBe(`attachment; filename="varroute-crew-north-co-${day}.ics"`);
    expect(await ics.text()).toMatch(/^BEGIN:VCALENDAR\r\n/);

    // A draft run is not the crew's yet.
    expect((await callLoader(gpxLoader, runId, member)).status).toBe(404);
    await publishRun(db, { runId, actorUserId: dispatcher });
    expect((await callLoader(gpxLoader, runId, member)).status).toBe(200);
    expect((await callLoader(icsLoader, runId, member)).status).toBe(200);
    for (const user of [outsider, office, customer]) {
      expect((await callLoader(gpxLoader, runId, user)).status).toBe(404);
      expect((await callLoader(icsLoader, runId, user)).status).toBe(404);
    }
    expect((await callLoader(gpxLoader, 999999, dispatcher)).status).toBe(404);
    expect((await callLoader(icsLoader, "abc", dispatcher)).status).toBe(404);
    const anonymous = await callLoader(gpxLoader, runId, null);
    expect(anonymous.status).toBe(302);
  });
});
