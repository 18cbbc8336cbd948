import Papa from "papaparse";
import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { CUSTOMER_CSV_COLUMNS, MAX_IMPORT_BYTES } from "~/forms/customer-import";
import { exportCustomersCsv, importCustomersCsv } from "~/models/customer-import.server";
import { db } from "~/services/db.server";
import { resetDatabase } from "./reset-database";

afterAll(() => db.destroy());

let officeId: number;
beforeEach(async () => {
  await resetDatabase(db);
  const [office] = await db("users").insert({ email: "office@example.test", password_hash: "x", role: "office", name: "Office" }).returning("id");
  officeId = office.id;
});

type Row = Record<(typeof CUSTOMER_CSV_COLUMNS)[number], string>;

const wren: Row = {
  customer_name: "Wren Applegarth",
  email: "wren@example.com",
  phone: "607-555-0142",
  address_line: "12 Orchard Lane",
  city: "Dryden",
  region: "NY",
  postal_code: "13053",
  yard_name: "Home yard",
  lat: "42.4906",
  lng: "-76.2972",
  colonies: "3",
  box_type: "deep",
  brood_boxes_per_colony: "2",
  brood_status: "brood",
  supers_off: "yes",
  access_notes: "Gate code 4411",
};
const wrenOrchard: Row = { ...wren, yard_name: "Orchard", lat: "42.5012", lng: "-76.3101", colonies: "2", brood_boxes_per_colony: "1", brood_status: "broodless", supers_off: "no", access_notes: "" };
const tobias: Row = {
  customer_name: "Tobias Fernsby",
  email: "tobias@example.org",
  phone: "",
  address_line: "",
  city: "Groton",
  region: "NY",
  postal_code: "",
  yard_name: "Hilltop",
  lat: "42.5879",
  lng: "-76.3666",
  colonies: "4",
  box_type: "",
  brood_boxes_per_colony: "1",
  brood_status: "unknown",
  supers_off: "false",
  access_notes: "Park by the barn, walk up past the pond",
};

function csv(rows: Row[], columns: readonly (keyof Row)[] = CUSTOMER_CSV_COLUMNS): string {
  return Papa.unparse({ fields: [...columns], data: rows.map((r) => columns.map((c) => r[c])) });
}

/** The columns of a file made before box_type existed. */
const OLD_COLUMNS = CUSTOMER_CSV_COLUMNS.filter((c) => c !== "box_type");

async function boxTypes(email: string) {
  const yards = await db("yards")
    .join("customers", "customers.id", "yards.customer_id")
    .where("customers.email", email)
    .orderBy("yards.name")
    .select("yards.id", "yards.name", "yards.box_type");
  const result: Record<string, { yard: string; colonies: string[] }> = {};
  for (const y of yards) {
    const colonies = await db("colonies").where({ yard_id: y.id, active: true }).orderBy("label").pluck("box_type");
    result[y.name] = { yard: y.box_type, colonies };
  }
  return result;
}

async function counts() {
  const n = async (table: "customers" | "yards" | "colonies" | "audit_log") => {
    const row = (await db(table).count("* as n").first()) as unknown as { n: number | string };
    return Number(row.n);
  };
  return { customers: await n("customers"), yards: await n("yards"), colonies: await n("colonies"), audit: await n("audit_log") };
}

const nothing = { customers: 0, yards: 0, colonies: 0, audit: 0 };

describe("importing customers and yards from CSV", () => {
  it("imports nothing when one row is bad, and names its line and field", async () => {
    const file = csv([wren, wrenOrchard, { ...tobias, lat: "91" }]);
    const result = await importCustomersCsv(db, file, officeId);
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(result.errors).toEqual([{ line: 4, field: "lat", message: "Latitude must be between −90 and 90." }]);
    expect(await counts()).toEqual(nothing);
  });

  it("reports every bad row, each with its line and field", async () => {
    const file = csv([
      { ...wren, email: "wren-at-example.com" },
      { ...wrenOrchard, colonies: "2.5" },
      tobias,
      { ...tobias, yard_name: "Meadow", lng: "-200", brood_status: "lots" },
      { ...tobias, yard_name: "Creek", supers_off: "perhaps" },
      { ...tobias, yard_name: "Ridge", box_type: "shallow" },
    ]);
    const result = await importCustomersCsv(db, file, officeId);
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(result.errors.map((e) => [e.line, e.field])).toEqual([
      [2, "email"],
      [3, "colonies"],
      [5, "lng"],
      [5, "brood_status"],
      [6, "supers_off"],
      [7, "box_type"],
    ]);
    expect(result.errors.at(-1)?.message).toBe("Enter the box type as deep, medium or nuc (blank = deep).");
    expect(result.totalErrors).toBe(6);
    expect(await counts()).toEqual(nothing);
  });

  it("imports customers, their yards and a colony row per colony, with an audit entry", async () => {
    const result = await importCustomersCsv(db, csv([wren, wrenOrchard, tobias]), officeId);
    expect(result).toMatchObject({ ok: true, customers: 2, yards: 3, customersCreated: 2, yardsCreated: 3, colonies: 9 });
    expect(await counts()).toEqual({ customers: 2, yards: 3, colonies: 9, audit: 1 });

    const customer = await db("customers").where({ email: "wren@example.com" }).first();
    expect(customer).toMatchObject({ name: "Wren Applegarth", phone: "607-555-0142", address_line: "12 Orchard Lane", city: "Dryden", region: "NY", postal_code: "13053", user_id: null });
    const home = await db("yards").where({ customer_id: customer!.id, name: "Home yard" }).first();
    expect(home).toMatchObject({ lat: 42.4906, lng: -76.2972, colony_count: 3, brood_boxes_per_colony: 2, brood_status: "brood", supers_off: true, access_notes: "Gate code 4411" });
    const colonies = await db("colonies").where({ yard_id: home!.id }).orderBy("label").select("label", "brood_boxes", "brood_status", "active");
    expect(colonies).toEqual([
      { label: "H1", brood_boxes: 2, brood_status: "brood", active: true },
      { label: "H2", brood_boxes: 2, brood_status: "brood", active: true },
      { label: "H3", brood_boxes: 2, brood_status: "brood", active: true },
    ]);
    const tobiasRow = await db("customers").where({ email: "tobias@example.org" }).first();
    expect(tobiasRow).toMatchObject({ phone: null, address_line: null, postal_code: null });

    const audit = await db("audit_log").first();
    expect(audit).toMatchObject({ actor_user_id: officeId, action: "customers.import", entity_type: "customer_import" });
    expect(audit!.after).toMatchObject({ rows: 3, customersCreated: 2, yardsCreated: 3 });
  });

  it("reuses a customer whose e-mail is already on file and updates their contact, never adding a second", async () => {
    const [existing] = await db("customers").insert({ name: "W. Applegarth", email: "Wren@Example.com", phone: "607-555-0100", city: "Ithaca" }).returning("id");
    const result = await importCustomersCsv(db, csv([wren, wrenOrchard]), officeId);
    expect(result).toMatchObject({ ok: true, customers: 1, customersCreated: 0, yards: 2 });
    const all = await db("customers").select("id", "name", "phone", "city");
    expect(all).toEqual([{ id: existing.id, name: "Wren Applegarth", phone: "607-555-0142", city: "Dryden" }]);
    expect(await db("yards").where({ customer_id: existing.id }).count("* as n").first()).toEqual({ n: 2 });

    // The same file again: still one customer, the same two yards, no extra colonies.
    const again = await importCustomersCsv(db, csv([wren, { ...wrenOrchard, colonies: "1" }]), officeId);
    expect(again).toMatchObject({ ok: true, customers: 1, customersCreated: 0, yards: 2, yardsCreated: 0 });
    expect(await counts()).toEqual({ customers: 1, yards: 2, colonies: 5, audit: 2 });
    const orchard = await db("yards").where({ name: "Orchard" }).first();
    expect(orchard!.colony_count).toBe(1);
    // The colony no longer counted is retired, not deleted (tallies may refer to it).
    expect(await db("colonies").where({ yard_id: orchard!.id }).orderBy("label").select("label", "active")).toEqual([
      { label: "H1", active: true },
      { label: "H2", active: false },
    ]);
  });

  it("stores medium and nuc yards with their box type, on the yard and on each colony", async () => {
    const result = await importCustomersCsv(
      db,
      csv([
        { ...wren, box_type: "Medium" },
        { ...wrenOrchard, box_type: "NUC", colonies: "2" },
        { ...wren, yard_name: "Creek", box_type: "", colonies: "1" },
      ]),
      officeId,
    );
    expect(result).toMatchObject({ ok: true, yardsCreated: 3 });
    expect(await boxTypes("wren@example.com")).toEqual({
      Creek: { yard: "deep", colonies: ["deep"] },
      "Home yard": { yard: "medium", colonies: ["medium", "medium", "medium"] },
      Orchard: { yard: "nuc", colonies: ["nuc", "nuc"] },
    });
  });

  it("changes a yard's box type, and its colonies', when the file is imported again", async () => {
    await importCustomersCsv(db, csv([wren, wrenOrchard]), officeId);
    expect(await boxTypes("wren@example.com")).toEqual({
      "Home yard": { yard: "deep", colonies: ["deep", "deep", "deep"] },
      Orchard: { yard: "deep", colonies: ["deep", "deep"] },
    });
    const again = await importCustomersCsv(db, csv([{ ...wren, box_type: "medium", colonies: "4" }, { ...wrenOrchard, box_type: "nuc" }]), officeId);
    expect(again).toMatchObject({ ok: true, yardsCreated: 0 });
    expect(await boxTypes("wren@example.com")).toEqual({
      "Home yard": { yard: "medium", colonies: ["medium", "medium", "medium", "medium"] },
      Orchard: { yard: "nuc", colonies: ["nuc", "nuc"] },
    });
  });

  it("imports a file made before the box_type column: new yards are deep, existing yards keep their box type", async () => {
    await importCustomersCsv(db, csv([{ ...wren, box_type: "nuc" }]), officeId);
    const result = await importCustomersCsv(db, csv([{ ...wren, colonies: "4" }, wrenOrchard, tobias], OLD_COLUMNS), officeId);
    expect(result).toMatchObject({ ok: true, customers: 2, yards: 3, yardsCreated: 2 });
    expect(await boxTypes("wren@example.com")).toEqual({
      "Home yard": { yard: "nuc", colonies: ["nuc", "nuc", "nuc", "nuc"] },
      Orchard: { yard: "deep", colonies: ["deep", "deep"] },
    });
    expect(await boxTypes("tobias@example.org")).toEqual({ Hilltop: { yard: "deep", colonies: ["deep", "deep", "deep", "deep"] } });
  });

  it("refuses a file over 5 MB and a file with more than 5,000 rows", async () => {
    const big = `${CUSTOMER_CSV_COLUMNS.join(",")}\n${"x".repeat(MAX_IMPORT_BYTES)}`;
    const tooBig = await importCustomersCsv(db, big, officeId);
    expect(tooBig).toMatchObject({ ok: false, errors: [{ line: 0, field: "file", message: expect.stringMatching(/larger than 5 MB/) }] });

    const rows = Array.from({ length: 5001 }, (_, i) => ({ ...tobias, yard_name: `Yard ${i + 1}` }));
    const tooMany = await importCustomersCsv(db, csv(rows), officeId);
    expect(tooMany).toMatchObject({ ok: false, errors: [{ line: 5002, field: "file", message: expect.stringMatching(/more than 5,000 rows/) }] });
    expect(await counts()).toEqual(nothing);
  });

  it("imports 5,000 rows in one go", async () => {
    const rows = Array.from({ length: 5000 }, (_, i) => ({ ...tobias, email: `keeper${Math.floor(i / 2)}@example.com`, yard_name: `Yard ${i % 2}`, colonies: "2" }));
    const result = await importCustomersCsv(db, csv(rows), officeId);
    expect(result).toMatchObject({ ok: true, customers: 2500, yards: 5000, colonies: 10000 });
    expect(await counts()).toEqual({ customers: 2500, yards: 5000, colonies: 10000, audit: 1 });
  });
});

describe("exporting customers and yards as CSV", () => {
  it("writes one row per yard with the same values as the database, and imports back unchanged", async () => {
    const tricky: Row = {
      ...wren,
      customer_name: "Zoë Quist-Ödegaard",
      email: "zoe@example.net",
      phone: "+1 607 555 0177",
      yard_name: "=Top field",
      access_notes: 'Gate "B", then left;\nring before 8 am',
    };
    await importCustomersCsv(db, csv([{ ...wren, box_type: "medium" }, { ...wrenOrchard, box_type: "nuc" }, tobias, tricky]), officeId);
    // An archived yard and an anonymised customer stay out of the export.
    const [gone] = await db("customers").insert({ name: "Former", email: "former@example.com", anonymised_at: new Date() }).returning("id");
    await db("yards").insert({ customer_id: gone.id, name: "Old", lat: 42, lng: -76 });
    await db("yards").insert({ customer_id: (await db("customers").where({ email: "wren@example.com" }).first())!.id, name: "Archived", lat: 42, lng: -76, archived_at: new Date() });

    const text = await exportCustomersCsv(db);
    const parsed = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.meta.fields).toEqual([...CUSTOMER_CSV_COLUMNS]);

    const fromDb = await db("yards")
      .join("customers", "customers.id", "yards.customer_id")
      .whereNull("yards.archived_at")
      .whereNull("customers.anonymised_at")
      .select("customers.*", "yards.name as yard_name", "yards.lat", "yards.lng", "yards.colony_count", "yards.box_type", "yards.brood_boxes_per_colony", "yards.brood_status", "yards.supers_off", "yards.access_notes");
    expect(parsed.data).toHaveLength(fromDb.length);
    expect(fromDb).toHaveLength(4);
    const unescape = (v: string) => v.replace(/^'(?=[=+\-@])/, "");
    for (const yard of fromDb) {
      const row = parsed.data.find((r) => r.email === yard.email && unescape(r.yard_name) === yard.yard_name);
      expect(row, `${yard.email} / ${yard.yard_name}`).toBeDefined();
      expect({
        customer_name: row!.customer_name,
        phone: unescape(row!.phone),
        address_line: row!.address_line,
        city: row!.city,
        region: row!.region,
        postal_code: row!.postal_code,
        lat: Number(row!.lat),
        lng: Number(row!.lng),
        colonies: Number(row!.colonies),
        box_type: row!.box_type,
        brood_boxes_per_colony: Number(row!.brood_boxes_per_colony),
        brood_status: row!.brood_status,
        supers_off: row!.supers_off === "yes",
        access_notes: row!.access_notes,
      }).toEqual({
        customer_name: yard.name,
        phone: yard.phone ?? "",
        address_line: yard.address_line ?? "",
        city: yard.city ?? "",
        region: yard.region ?? "",
        postal_code: yard.postal_code ?? "",
        lat: yard.lat,
        lng: yard.lng,
        colonies: yard.colony_count,
        box_type: yard.box_type,
        brood_boxes_per_colony: yard.brood_boxes_per_colony,
        brood_status: yard.brood_status,
        supers_off: yard.supers_off,
        access_notes: yard.access_notes,
      });
    }
    // Formula-like text is written with a leading apostrophe for spreadsheets.
    expect(fromDb.map((y) => y.box_type).sort()).toEqual(["deep", "deep", "medium", "nuc"]);
    expect(parsed.data.find((r) => r.email === "zoe@example.net")).toMatchObject({ phone: "'+1 607 555 0177", yard_name: "'=Top field" });

    // Round trip: importing the export changes nothing.
    const yardColumns = ["name", "lat", "lng", "colony_count", "box_type", "brood_boxes_per_colony", "brood_status", "supers_off", "access_notes"] as const;
    const before = await db("yards").orderBy("id").select("id", "customer_id", ...yardColumns);
    const result = await importCustomersCsv(db, text, officeId);
    expect(result).toMatchObject({ ok: true, customers: 3, yards: 4, customersCreated: 0, yardsCreated: 0 });
    expect(await db("yards").orderBy("id").select("id", "customer_id", ...yardColumns)).toEqual(before);

    // Moved to an empty database, the export gives the same yards, box types and colonies.
    type MovedColony = { label: string; brood_boxes: number; box_type: string; brood_status: string };
    type MovedYard = Record<(typeof yardColumns)[number], unknown> & { email: string; name: string; box_type: string; colonies: MovedColony[] };
    const yardsAndColonies = async (): Promise<MovedYard[]> => {
      const yards = await db("yards").join("customers", "customers.id", "yards.customer_id").whereNull("yards.archived_at").whereNull("customers.anonymised_at").select("customers.email", "yards.id", ...yardColumns.map((c) => `yards.${c}`));
      const all = await Promise.all(
        yards.map(async ({ id, ...yard }) => ({
          ...yard,
          colonies: (await db("colonies").where({ yard_id: id, active: true }).orderBy("label").select("label", "brood_boxes", "box_type", "brood_status")) as MovedColony[],
        })),
      );
      return all.sort((a, b) => `${a.email} ${a.name}`.localeCompare(`${b.email} ${b.name}`));
    };
    const original = await yardsAndColonies();
    await resetDatabase(db);
    const [office] = await db("users").insert({ email: "office@example.test", password_hash: "x", role: "office", name: "Office" }).returning("id");
    expect(await importCustomersCsv(db, text, office.id)).toMatchObject({ ok: true, customers: 3, yards: 4, customersCreated: 3, yardsCreated: 4 });
    const moved = await yardsAndColonies();
    expect(moved).toEqual(original);
    expect(moved.map((y) => [y.name, y.box_type, [...new Set(y.colonies.map((c) => c.box_type))]])).toEqual(
      expect.arrayContaining([
        ["Home yard", "medium", ["medium"]],
        ["Orchard", "nuc", ["nuc"]],
      ]),
    );
  });
});
