import { describe, expect, it } from "vitest";
import { BOX_TYPE_LABELS, MAX_BROOD_BOXES, MIN_BROOD_BOXES } from "~/domain/box-types";
import { checkCustomerCsv, CUSTOMER_CSV_COLUMNS, CUSTOMER_CSV_HELP, customerCsvText, customerImportRowSchema, MAX_IMPORT_ROWS } from "~/forms/customer-import";

const good = {
  customer_name: "Wren Applegarth",
  email: "Wren.Applegarth@Example.com",
  phone: "607-555-0142",
  address_line: "12 Orchard Lane",
  city: "Dryden",
  region: "NY",
  postal_code: "13053",
  yard_name: "Home yard",
  lat: "42.4906",
  lng: "-76.2972",
  colonies: "6",
  box_type: "Medium",
  brood_boxes_per_colony: "2",
  brood_status: "Brood",
  supers_off: "Yes",
  access_notes: "Gate code 4411",
};

function messageFor(change: Partial<Record<keyof typeof good, string>>, field: keyof typeof good): string | undefined {
  const result = customerImportRowSchema.safeParse({ ...good, ...change });
  if (result.success) return undefined;
  return result.error.issues.find((i) => i.path[0] === field)?.message;
}

describe("customer import row schema", () => {
  it("accepts a good row and normalises it", () => {
    const row = customerImportRowSchema.parse(good);
    expect(row).toMatchObject({
      email: "wren.applegarth@example.com",
      lat: 42.4906,
      lng: -76.2972,
      colonies: 6,
      box_type: "medium",
      brood_boxes_per_colony: 2,
      brood_status: "brood",
      supers_off: true,
    });
  });

  it("turns blank optional cells into nulls and defaults", () => {
    const row = customerImportRowSchema.parse({ ...good, phone: "", address_line: " ", city: "", region: "", postal_code: "", box_type: " ", brood_status: "", supers_off: "", access_notes: "" });
    expect(row).toMatchObject({ phone: null, address_line: null, city: null, region: null, postal_code: null, box_type: "deep", brood_status: "unknown", supers_off: false, access_notes: "" });
  });

  it.each([
    ["lat", "91", /Latitude must be between −90 and 90/],
    ["lat", "-90.5", /Latitude must be between −90 and 90/],
    ["lat", "north", /latitude as a decimal number/],
    ["lat", "", /Enter the latitude/],
    ["lng", "180.01", /Longitude must be between −180 and 180/],
    ["lng", "76,5", /longitude as a decimal number/],
    ["colonies", "3.5", /whole number, 0 or more/],
    ["colonies", "-1", /whole number, 0 or more/],
    ["colonies", "201", /at most 200 colonies/],
    ["colonies", "", /Enter the number of colonies/],
    ["brood_boxes_per_colony", String(MAX_BROOD_BOXES + 1), new RegExp(`at most ${MAX_BROOD_BOXES} brood boxes`)],
    ["brood_boxes_per_colony", String(MIN_BROOD_BOXES - 1), new RegExp(`enter ${MIN_BROOD_BOXES} to ${MAX_BROOD_BOXES} brood boxes`)],
    ["box_type", "shallow", /Enter the box type as deep, medium or nuc \(blank = deep\)/],
    ["box_type", "deeps", /Enter the box type as deep, medium or nuc/],
    ["email", "wren-at-example.com", /valid e-mail address/],
    ["email", "", /Enter the customer's e-mail/],
    ["customer_name", "  ", /Enter the customer's name/],
    ["yard_name", "", /Enter the yard's name/],
    ["brood_status", "some", /brood, broodless or unknown/],
    ["supers_off", "maybe", /yes or no/],
    ["phone", "call me", /digits, spaces/],
  ] as const)("%s = %j: %s", (field, value, message) => {
    expect(messageFor({ [field]: value }, field)).toMatch(message);
  });

  it("accepts the poles and the antimeridian, and true/false for supers", () => {
    expect(customerImportRowSchema.safeParse({ ...good, lat: "90", lng: "-180", supers_off: "FALSE" }).success).toBe(true);
    expect(customerImportRowSchema.parse({ ...good, supers_off: "true" }).supers_off).toBe(true);
    expect(customerImportRowSchema.parse({ ...good, colonies: "0" }).colonies).toBe(0);
  });

  it.each([
    ["deep", "deep"],
    ["DEEP", "deep"],
    ["Medium", "medium"],
    [" nuc ", "nuc"],
    ["NUC", "nuc"],
    ["", "deep"],
    [BOX_TYPE_LABELS.nuc, "nuc"],
    ["nuc  (SMALL single box)", "nuc"],
  ] as const)("reads the box type %j as %s", (value, boxType) => {
    expect(customerImportRowSchema.parse({ ...good, box_type: value }).box_type).toBe(boxType);
  });

  it("takes every number of brood boxes the crew may record, and no more", () => {
    for (let boxes = MIN_BROOD_BOXES; boxes <= MAX_BROOD_BOXES; boxes++) {
      expect(customerImportRowSchema.parse({ ...good, brood_boxes_per_colony: String(boxes) }).brood_boxes_per_colony).toBe(boxes);
    }
    expect(CUSTOMER_CSV_HELP.brood_boxes_per_colony).toContain(`${MIN_BROOD_BOXES} to ${MAX_BROOD_BOXES}`);
  });

  it("explains the box type column in plain words", () => {
    expect(CUSTOMER_CSV_COLUMNS.indexOf("box_type")).toBe(CUSTOMER_CSV_COLUMNS.indexOf("brood_boxes_per_colony") - 1);
    expect(CUSTOMER_CSV_HELP.box_type).toMatch(/deep, medium or nuc \(small single box\); blank = deep/);
  });

  it("takes off the apostrophe the export puts before formula-like text", () => {
    expect(customerImportRowSchema.parse({ ...good, phone: "'+1 607 555 0142" }).phone).toBe("+1 607 555 0142");
    expect(customerImportRowSchema.parse({ ...good, access_notes: "'O'Hara's gate" }).access_notes).toBe("'O'Hara's gate");
  });
});

const header = CUSTOMER_CSV_COLUMNS.join(",");
const line = (change: Partial<Record<keyof typeof good, string>> = {}) => CUSTOMER_CSV_COLUMNS.map((c) => ({ ...good, ...change })[c]).join(",");

describe("checking a whole file", () => {
  it("reports each problem at its line in the file, counting lines inside quoted values", async () => {
    const text = [
      header,
      line({ yard_name: "North" }),
      // A quoted note over three lines: this record covers lines 3–5.
      line({ yard_name: "South", access_notes: '"Gate on the left,\nthen the track\nto the barn"' }),
      line({ yard_name: "East", lat: "91" }),
      "",
      line({ yard_name: "West", email: "not-an-email" }),
    ].join("\n");
    const check = await checkCustomerCsv(text);
    expect(check.errors).toEqual([
      { line: 6, field: "lat", message: "Latitude must be between −90 and 90." },
      { line: 8, field: "email", message: "Enter a valid e-mail address, e.g. name@example.com." },
    ]);
    expect(check.rows.map((r) => [r.line, r.yard_name])).toEqual([
      [2, "North"],
      [3, "South"],
    ]);
    expect(check.rows[1].access_notes).toBe("Gate on the left,\nthen the track\nto the barn");
  });

  it("needs every column in the header and names what is wrong", async () => {
    const check = await checkCustomerCsv(`${header.replace("lat,", "latitude,")}\n${line()}`);
    expect(check.errors.map((e) => [e.line, e.field])).toEqual([
      [1, "header"],
      [1, "header"],
    ]);
    expect(check.errors[0].message).toMatch(/Unknown column “latitude”/);
    expect(check.errors[1].message).toMatch(/lacks the column “lat”/);
  });

  it("names the line and column of a bad box type", async () => {
    const check = await checkCustomerCsv([header, line({ yard_name: "North" }), line({ yard_name: "South", box_type: "langstroth" })].join("\n"));
    expect(check.errors).toEqual([{ line: 3, field: "box_type", message: "Enter the box type as deep, medium or nuc (blank = deep)." }]);
    expect(check.rows.map((r) => [r.yard_name, r.box_type])).toEqual([["North", "medium"]]);
  });

  it("still reads a file made before the box_type column, leaving the box type unset", async () => {
    const oldColumns = CUSTOMER_CSV_COLUMNS.filter((c) => c !== "box_type");
    const oldLine = (change: Partial<Record<keyof typeof good, string>> = {}) => oldColumns.map((c) => ({ ...good, ...change })[c]).join(",");
    const check = await checkCustomerCsv([oldColumns.join(","), oldLine({ yard_name: "North" }), oldLine({ yard_name: "South" })].join("\n"));
    expect(check.errors).toEqual([]);
    expect(check.rows.map((r) => [r.yard_name, r.box_type, r.brood_boxes_per_colony])).toEqual([
      ["North", null, 2],
      ["South", null, 2],
    ]);
  });

  it("still needs every other column", async () => {
    const check = await checkCustomerCsv(`${CUSTOMER_CSV_COLUMNS.filter((c) => c !== "box_type" && c !== "colonies").join(",")}\n`);
    expect(check.errors).toEqual([{ line: 1, field: "header", message: expect.stringMatching(/lacks the column “colonies”.*every column but box_type/) }]);
  });

  it("refuses an empty file and a header without rows", async () => {
    expect((await checkCustomerCsv("")).errors[0]).toMatchObject({ line: 1, field: "header" });
    expect((await checkCustomerCsv(`${header}\n`)).errors[0]).toMatchObject({ line: 2, field: "file", message: "The file has no rows under the header." });
  });

  it("reports a row with too few values and an unclosed quote", async () => {
    const check = await checkCustomerCsv([header, "Wren,wren@example.com,607", line({ yard_name: "A", access_notes: '"never closed' })].join("\n"));
    expect(check.errors[0]).toMatchObject({ line: 2, field: "row" });
    expect(check.errors[0].message).toMatch(/3 values; the header has 16 columns/);
    expect(check.errors.some((e) => e.line === 3 && /not closed/.test(e.message))).toBe(true);
  });

  it("keeps one customer per e-mail and one yard name per customer", async () => {
    const text = [header, line({ yard_name: "North" }), line({ yard_name: "South", phone: "607-555-0199" }), line({ yard_name: "north" })].join("\n");
    const check = await checkCustomerCsv(text);
    expect(check.errors).toEqual([
      { line: 3, field: "phone", message: expect.stringMatching(/Differs from line 2/) },
      { line: 4, field: "yard_name", message: expect.stringMatching(/yard with this name on line 2/) },
    ]);
  });

  it(`stops after ${MAX_IMPORT_ROWS} rows with a message`, async () => {
    const rows = Array.from({ length: MAX_IMPORT_ROWS + 1 }, (_, i) => line({ yard_name: `Yard ${i}` }));
    const check = await checkCustomerCsv([header, ...rows].join("\n"));
    expect(check.errors).toEqual([{ line: MAX_IMPORT_ROWS + 2, field: "file", message: expect.stringMatching(/more than 5,000 rows/) }]);
  });

  it("reports progress while pausing between batches, ending at the last line", async () => {
    const rows = Array.from({ length: 450 }, (_, i) => line({ yard_name: `Yard ${i}` }));
    const seen: number[] = [];
    const check = await checkCustomerCsv([header, ...rows].join("\r\n"), { pauseEvery: 100, onProgress: (p) => seen.push(p.linesRead) });
    expect(check.totalErrors).toBe(0);
    expect(check.rows).toHaveLength(450);
    expect(check.rows.at(-1)?.line).toBe(451);
    expect(seen.length).toBeGreaterThan(3);
    expect(seen).toEqual([...seen].sort((a, b) => a - b));
    expect(seen.at(-1)).toBe(451);
  });

  it("writes CSV that checks back to the same values", async () => {
    const text = customerCsvText([
      { ...good, phone: "+1 607 555 0142", lat: 42.4906, lng: -76.2972, colonies: 6, box_type: "nuc", brood_boxes_per_colony: 2, access_notes: 'Say "hi", then\nclose the gate' },
    ]);
    expect(text.split("\r\n")[0]).toBe(header);
    const check = await checkCustomerCsv(text);
    expect(check.totalErrors).toBe(0);
    expect(check.rows[0]).toMatchObject({ phone: "+1 607 555 0142", lat: 42.4906, lng: -76.2972, box_type: "nuc", access_notes: 'Say "hi", then\nclose the gate' });
  });
});
