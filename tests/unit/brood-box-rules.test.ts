import { describe, expect, it } from "vitest";
import { MAX_BROOD_BOXES } from "~/domain/box-types";
import { checkCustomerCsv, CUSTOMER_CSV_COLUMNS, CUSTOMER_CSV_HELP, customerCsvText, customerImportRowSchema } from "~/forms/customer-import";
import { fieldErrors } from "~/forms/field-errors";
import { tallyPayloadSchema } from "~/forms/sync";
import { yardSchema } from "~/forms/yard";

// A living colony has at least one brood box: the dose goes by brood boxes, so 0 boxes would
// let a colony be tallied "treated" with 0 g.

const yard = { name: "Orchard", lat: "42.45", lng: "-76.48", colonyCount: "3", broodBoxesPerColony: "1", broodStatus: "brood", supersOff: "on", accessNotes: "" };

const row = {
  customer_name: "Wren Applegarth",
  email: "wren@example.com",
  phone: "",
  address_line: "",
  city: "",
  region: "",
  postal_code: "",
  yard_name: "Home yard",
  lat: "42.4906",
  lng: "-76.2972",
  colonies: "6",
  box_type: "",
  brood_boxes_per_colony: "2",
  brood_status: "brood",
  supers_off: "yes",
  access_notes: "",
};

describe("the yard form", () => {
  it("refuses 0 brood boxes per colony, with the message at that field", () => {
    const result = yardSchema.safeParse({ ...yard, broodBoxesPerColony: "0" });
    expect(result.success).toBe(false);
    expect(fieldErrors(result.error!)).toEqual({ broodBoxesPerColony: "A living colony has at least one brood box." });
  });

  it("accepts 1 to 6 brood boxes (the crew's screen allows as many), and refuses 7 and half boxes", () => {
    expect(MAX_BROOD_BOXES).toBe(6);
    for (const boxes of ["1", "2", "3", "4", "5", "6"]) expect(yardSchema.parse({ ...yard, broodBoxesPerColony: boxes }).broodBoxesPerColony).toBe(Number(boxes));
    expect(fieldErrors(yardSchema.safeParse({ ...yard, broodBoxesPerColony: "7" }).error!).broodBoxesPerColony).toBe("Enter at most 6 brood boxes per colony.");
    expect(fieldErrors(yardSchema.safeParse({ ...yard, broodBoxesPerColony: "1.5" }).error!).broodBoxesPerColony).toMatch(/whole boxes/);
  });

  it("still takes a yard with no colonies (its boxes per colony stay at least 1)", () => {
    expect(yardSchema.parse({ ...yard, colonyCount: "0" })).toMatchObject({ colonyCount: 0, broodBoxesPerColony: 1 });
  });
});

describe("the customer import", () => {
  it("refuses a row with 0 brood boxes per colony, at that column", () => {
    const result = customerImportRowSchema.safeParse({ ...row, brood_boxes_per_colony: "0" });
    expect(result.success).toBe(false);
    const issues = result.error!.issues.filter((i) => i.path[0] === "brood_boxes_per_colony");
    expect(issues.map((i) => i.message)).toEqual(["A living colony has at least one brood box: enter 1 to 6 brood boxes per colony."]);
    expect(customerImportRowSchema.parse({ ...row, brood_boxes_per_colony: "1" }).brood_boxes_per_colony).toBe(1);
  });

  it("lists the 0-box row by its line and column, and imports the others", async () => {
    const text = customerCsvText([
      { ...row, yard_name: "North" },
      { ...row, yard_name: "South", brood_boxes_per_colony: 0 },
      { ...row, yard_name: "East", brood_boxes_per_colony: 4 },
    ]);
    const check = await checkCustomerCsv(text);
    expect(check.errors).toEqual([
      { line: 3, field: "brood_boxes_per_colony", message: "A living colony has at least one brood box: enter 1 to 6 brood boxes per colony." },
    ]);
    expect(check.rows.map((r) => r.yard_name)).toEqual(["North", "East"]);
  });

  it("says 1 to 6 in the column help", () => {
    expect(CUSTOMER_CSV_COLUMNS).toContain("brood_boxes_per_colony");
    expect(CUSTOMER_CSV_HELP.brood_boxes_per_colony).toMatch(/^Brood boxes per colony, 1 to 6/);
  });
});

describe("the crew's wash count", () => {
  const tally = { visitId: 1, colonyLabel: "H1", outcome: "treated", skipReason: null, skipNote: null, notes: null, recordedAt: "2026-11-10T15:00:00Z" };

  it("takes the sample's volume instead of the bees counted", () => {
    const parsed = tallyPayloadSchema.parse({ ...tally, mites: 9, beesSampled: null, sampleMl: "118.3" });
    expect(parsed).toMatchObject({ mites: 9, beesSampled: null, sampleMl: 118.3 });
  });

  it("still needs the mites with a volume, and bees or a volume with the mites", () => {
    const noMites = tallyPayloadSchema.safeParse({ ...tally, mites: null, beesSampled: null, sampleMl: 118 });
    expect(fieldErrors(noMites.error!).mites).toMatch(/mites were counted/);
    const noBees = tallyPayloadSchema.safeParse({ ...tally, mites: 4, beesSampled: null, sampleMl: null });
    expect(fieldErrors(noBees.error!).beesSampled).toMatch(/or the sample's volume in mL/);
  });

  it("refuses volumes outside 10–1000 mL", () => {
    for (const sampleMl of [0, 5, 1001, -118]) {
      const result = tallyPayloadSchema.safeParse({ ...tally, mites: 4, beesSampled: null, sampleMl });
      expect(fieldErrors(result.error!).sampleMl).toBe("Enter the sample volume from 10 to 1000 mL.");
    }
  });

  it("reads a tally from an older phone without a volume", () => {
    const { sampleMl: _none, ...older } = { ...tally, mites: 9, beesSampled: 300, sampleMl: undefined };
    expect(tallyPayloadSchema.parse(older)).toMatchObject({ mites: 9, beesSampled: 300, sampleMl: null });
  });
});
