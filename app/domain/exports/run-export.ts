/**
 * What a run export (GPX for navigation devices, iCalendar for calendars) needs to know
 * about a run. Pure data: the model layer fills it from the database
 * (app/models/run-exports.server.ts).
 */

export interface RunExportPlace {
  label: string;
  lat: number;
  lng: number;
}

export interface RunExportStop {
  visitId: number;
  /** The stop's number on the run, from 1. */
  number: number;
  yardName: string;
  customerName: string;
  address: string | null;
  lat: number;
  lng: number;
  accessNotes: string;
  colonies: number;
  broodBoxesPerColony: number;
  /** Grams of oxalic acid dihydrate for the stop. */
  doseGrams: number;
  arriveAt: Date;
  startAt: Date;
  leaveAt: Date;
  /** Arrival and service start as the crew reads them, e.g. "09:40" (business time zone). */
  arriveClock: string;
  startClock: string;
}

export interface RunExport {
  runId: number;
  crewName: string;
  /** YYYY-MM-DD. */
  serviceDate: string;
  /** Counts re-plans of a published run; calendars use it to replace older copies of events. */
  version: number;
  status: string;
  /** The dose rate the grams were worked out with, for the description. */
  doseGramsPerBroodBox: number;
  productName: string;
  start: RunExportPlace;
  end: RunExportPlace;
  stops: RunExportStop[];
  totalGrams: number;
  /** When the file is made (GPX metadata time, iCalendar DTSTAMP). */
  generatedAt: Date;
}

/** A file name part from free text: lower case letters, digits and dashes. */
export function fileNamePart(text: string): string {
  const slug = text
    .normalize("NFKD")
    .replace(/[\u0300-\u036f]/g, "")
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "");
  return slug || "run";
}

/** "varroute-crew-1-2026-12-08" — the base of an export's file name. */
export function runExportBaseName(run: Pick<RunExport, "crewName" | "serviceDate">): string {
  return `varroute-${fileNamePart(run.crewName)}-${run.serviceDate}`;
}

export function pluralColonies(count: number): string {
  return `${count} ${count === 1 ? "colony" : "colonies"}`;
}
