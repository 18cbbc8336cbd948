import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import {
  applicatorLicences,
  applicatorNames,
  gramsText,
  RECORD_CSV_COLUMNS,
  recordsCsv,
  recordsFileName,
  type ApplicationRecordLine,
} from "~/domain/application-records-csv";

function aLine(overrides: Partial<ApplicationRecordLine> = {}): ApplicationRecordLine {
  return {
    visitId: 41,
    serviceDate: "2026-11-03",
    startedAt: "2026-11-03T14:05:00.000Z",
    finishedAt: "2026-11-03T14:40:00.000Z",
    startTime: "09:05",
    finishTime: "09:40",
    timeZone: "America/New_York",
    customerId: 7,
    customerName: "Hazel Pike",
    customerAddress: "4 Mill Lane, Varna, NY, 14850",
    customerAnonymised: false,
    yardId: 9,
    yardName: "Orchard",
    yardAddress: null,
    lat: 42.455123,
    lng: -76.431,
    crewId: 2,
    crewName: "East",
    coloniesTreated: 3,
    coloniesSkipped: 1,
    gramsApplied: 4.5,
    productName: "A product",
    productRegistrationNumber: "REG-1",
    applicators: [{ name: "Sam Reed", licence: "L-77" }],
    weatherNote: null,
    ...overrides,
  };
}

const parse = (csv: string) => Papa.parse<Record<string, string>>(csv, { header: true });

describe("application records CSV", () => {
  it("has a header row and one row per line, in the columns' order", () => {
    const csv = recordsCsv([aLine(), aLine({ visitId: 42 })]);
    const [header, ...rest] = csv.split("\r\n");
    expect(header.split(",")).toEqual(RECORD_CSV_COLUMNS.map((c) => c.header));
    expect(rest).toHaveLength(2);
    expect(recordsCsv([])).toBe(RECORD_CSV_COLUMNS.map((c) => c.header).join(","));
  });

  it("parses back to the same values, quoting commas, quotes and line breaks", () => {
    const line = aLine({
      customerName: 'Ash, "Queenie" & Co',
      yardAddress: "Lane off Route 13, Dryden",
      weatherNote: "Cold\ncalm, 2 °C",
      airTempC: 2.5,
      applicators: [
        { name: "Sam Reed", licence: "L-77" },
        { name: "Kit Moss", licence: null },
      ],
    });
    const { data, errors } = parse(recordsCsv([line]));
    expect(errors).toEqual([]);
    expect(data[0]).toEqual({
      Visit: "41",
      Date: "2026-11-03",
      Start: "09:05",
      Finish: "09:40",
      "Time zone": "America/New_York",
      Customer: 'Ash, "Queenie" & Co',
      "Customer address": "4 Mill Lane, Varna, NY, 14850",
      Yard: "Orchard",
      "Yard address": "Lane off Route 13, Dryden",
      Latitude: "42.455123",
      Longitude: "-76.431",
      Crew: "East",
      "Colonies treated": "3",
      "Colonies skipped": "1",
      Product: "A product",
      "Registration number": "REG-1",
      "Grams applied": "4.50",
      Applicator: "Sam Reed; Kit Moss",
      "Applicator licence": "L-77; none on file",
      Weather: "Cold\ncalm, 2 °C",
      "Air temperature (°C)": "2.5",
    });
  });

  it("defuses text a spreadsheet would run as a formula, but keeps a negative longitude a number", () => {
    const { data } = parse(recordsCsv([aLine({ customerName: "=HYPERLINK(\"x\")", weatherNote: "-2 °C, @dawn", lng: -76.5, airTempC: -2 })]));
    expect(data[0].Customer).toBe("'=HYPERLINK(\"x\")");
    expect(data[0].Weather).toBe("'-2 °C, @dawn");
    expect(data[0].Longitude).toBe("-76.5");
    expect(data[0]["Air temperature (°C)"]).toBe("-2");
  });

  it("leaves missing values blank", () => {
    const { data } = parse(recordsCsv([aLine({ startTime: null, finishTime: null, crewName: null, applicators: [], yardAddress: null, airTempC: null })]));
    expect(data[0]).toMatchObject({ Start: "", Finish: "", Crew: "", Applicator: "", "Applicator licence": "", "Yard address": "", "Air temperature (°C)": "" });
  });
});

describe("grams and names", () => {
  it("writes grams with two decimals, without float residue", () => {
    expect(gramsText(0)).toBe("0.00");
    expect(gramsText(4)).toBe("4.00");
    expect(gramsText(0.1 + 0.2)).toBe("0.30");
    expect(gramsText(1.005)).toBe("1.01");
    expect(gramsText(1234.5)).toBe("1234.50");
  });

  it("keeps names and licences in the same order", () => {
    const people = [
      { name: "A", licence: null },
      { name: "B", licence: "L2" },
    ];
    expect(applicatorNames(people)).toBe("A; B");
    expect(applicatorLicences(people)).toBe("none on file; L2");
    expect(applicatorLicences([{ name: "A", licence: null }])).toBe("");
  });

  it("names the file after the period", () => {
    expect(recordsFileName({ from: "2026-01-01", to: "2026-11-30" }, "csv")).toBe("application-records-2026-01-01-to-2026-11-30.csv");
    expect(recordsFileName({ from: "2026-01-01", to: '2026"-11' }, "pdf")).toBe("application-records-2026-01-01-to-2026-11.pdf");
  });
});
