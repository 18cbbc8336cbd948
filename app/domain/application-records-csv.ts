import Papa from "papaparse";
import { gramsToCentigrams } from "./dose";

// Application records as a CSV file: one line per finished visit, with a header row.
// Pure: the model (app/models/application-records.server.ts) reads the lines, the route
// sends the text. Dates are ISO (YYYY-MM-DD), clock times HH:MM in the business's time
// zone (named in their own column), grams to 0.01 g as the tallies store them.

/** Who applied the product at a visit, with the licence number on their account. */
export type RecordApplicator = { name: string; licence: string | null };

/** One application record: a finished visit, its place, what was applied and by whom. */
export type ApplicationRecordLine = {
  visitId: number;
  /** The service day (YYYY-MM-DD). */
  serviceDate: string;
  /** Instants (ISO 8601, UTC). */
  startedAt: string | null;
  finishedAt: string | null;
  /** Clock times (HH:MM, 24-hour) in `timeZone`. */
  startTime: string | null;
  finishTime: string | null;
  timeZone: string;
  customerId: number;
  customerName: string;
  customerAddress: string;
  /** True when the customer was anonymised: name and address are what anonymising left. */
  customerAnonymised: boolean;
  yardId: number;
  yardName: string;
  yardAddress: string | null;
  lat: number;
  lng: number;
  crewId: number | null;
  crewName: string | null;
  /** Counted from the tallies (not the booking). */
  coloniesTreated: number;
  coloniesSkipped: number;
  /** The sum of the treated tallies' doses, exact to 0.01 g. */
  gramsApplied: number;
  productName: string;
  productRegistrationNumber: string;
  /** Crew members who recorded the treatments (the one who finished when nobody did). */
  applicators: RecordApplicator[];
  weatherNote: string | null;
  /** The air temperature the crew read at the yard, °C (null when not recorded). */
  airTempC?: number | null;
};

/** Grams as stored (two decimals, e.g. "4.00"), without floating-point residue. */
export function gramsText(grams: number): string {
  const centigrams = gramsToCentigrams(grams);
  const sign = centigrams < 0 ? "-" : "";
  const abs = Math.abs(centigrams);
  return `${sign}${Math.floor(abs / 100)}.${String(abs % 100).padStart(2, "0")}`;
}

/** Applicators' names, "; " between several. */
export function applicatorNames(applicators: readonly RecordApplicator[]): string {
  return applicators.map((a) => a.name).join("; ");
}

/** Their licence numbers in the same order ("" for one without; "none on file" among several). */
export function applicatorLicences(applicators: readonly RecordApplicator[]): string {
  if (applicators.length === 1) return applicators[0].licence ?? "";
  return applicators.map((a) => a.licence ?? "none on file").join("; ");
}

/** The CSV columns, in order: header text and the cell of a line. */
export const RECORD_CSV_COLUMNS: readonly { header: string; cell: (line: ApplicationRecordLine) => string | number }[] = [
  { header: "Visit", cell: (l) => l.visitId },
  { header: "Date", cell: (l) => l.serviceDate },
  { header: "Start", cell: (l) => l.startTime ?? "" },
  { header: "Finish", cell: (l) => l.finishTime ?? "" },
  { header: "Time zone", cell: (l) => l.timeZone },
  { header: "Customer", cell: (l) => l.customerName },
  { header: "Customer address", cell: (l) => l.customerAddress },
  { header: "Yard", cell: (l) => l.yardName },
  { header: "Yard address", cell: (l) => l.yardAddress ?? "" },
  { header: "Latitude", cell: (l) => l.lat },
  { header: "Longitude", cell: (l) => l.lng },
  { header: "Crew", cell: (l) => l.crewName ?? "" },
  { header: "Colonies treated", cell: (l) => l.coloniesTreated },
  { header: "Colonies skipped", cell: (l) => l.coloniesSkipped },
  { header: "Product", cell: (l) => l.productName },
  { header: "Registration number", cell: (l) => l.productRegistrationNumber },
  { header: "Grams applied", cell: (l) => gramsText(l.gramsApplied) },
  { header: "Applicator", cell: (l) => applicatorNames(l.applicators) },
  { header: "Applicator licence", cell: (l) => applicatorLicences(l.applicators) },
  { header: "Weather", cell: (l) => l.weatherNote ?? "" },
  { header: "Air temperature (°C)", cell: (l) => l.airTempC ?? "" },
];

/**
 * The records as CSV text: a header row, then one row per line, CRLF between rows (none after the last). Text that a
 * spreadsheet would take for a formula (starting with = + - @) gets a leading apostrophe;
 * numbers (the coordinates) are written as numbers, so a negative longitude stays a number.
 */
export function recordsCsv(lines: readonly ApplicationRecordLine[]): string {
  const csv = Papa.unparse(
    {
      fields: RECORD_CSV_COLUMNS.map((c) => c.header),
      data: lines.map((line) => RECORD_CSV_COLUMNS.map((c) => c.cell(line))),
    },
    { header: true, newline: "\r\n", escapeFormulae: true },
  );
  // Without rows, papaparse ends the header with a line break; with rows it does not.
  return csv.replace(/\r\n$/, "");
}

/** A download's file name for the period, e.g. "application-records-2026-01-01-to-2026-11-30.csv". */
export function recordsFileName(period: { from: string; to: string }, extension: "csv" | "pdf"): string {
  const safe = (date: string) => date.replace(/[^0-9-]/g, "");
  return `application-records-${safe(period.from)}-to-${safe(period.to)}.${extension}`;
}

/**
 * What the records page and the PDF say about keeping the records: guidance only, the rules
 * where the business works decide. Source: US EPA certification rule (40 CFR 171) as
 * summarised by pesticidestewardship.org — restricted-use application records kept two years;
 * many states ask for records of every pesticide applied for hire (shared/sources.md).
 */
export const RECORD_KEEPING_NOTICE = {
  title: "Keeping these records",
  text:
    "Which application records you must keep, what they must show and for how long is set by the rules where you work: " +
    "ask your state or national pesticide regulator, and follow them where they differ from this note. As a guide, " +
    "in the United States the federal rule for restricted-use pesticides has certified applicators keep each record for two years, " +
    "and many states ask for records of every pesticide applied for hire. Download the records for the period and keep them with your own files.",
} as const;
