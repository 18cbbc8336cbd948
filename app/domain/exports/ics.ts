/**
 * A run as iCalendar (RFC 5545): one VEVENT per stop, from arrival to departure, so a crew
 * can put the day into any calendar. Rules followed:
 *
 * - content lines end in CRLF and are folded so no line is longer than 75 octets of UTF-8
 *   (a fold is CRLF followed by one space; a character is never split) — §3.1;
 * - TEXT values escape backslash, semicolon and comma with a backslash and write line
 *   breaks as \n — §3.3.11;
 * - DTSTAMP, DTSTART and DTEND are UTC date-times ("Z" form) — §3.3.5;
 * - each event's UID stays the same for the same stop of the same run, and SEQUENCE counts
 *   the run's re-publications, so a calendar replaces an older copy — §3.8.4.7, §3.8.7.4;
 * - GEO is "latitude;longitude" as floats — §3.8.1.6.
 */

import { SAFETY_CAUTIONS } from "../safety";
import { pluralColonies, type RunExport, type RunExportStop } from "./run-export";

export const ICS_PRODID = "-//Varroute//Run export//EN";
const CRLF = "\r\n";
const MAX_OCTETS = 75;

/** Escapes a TEXT value (RFC 5545 §3.3.11). */
export function escapeIcsText(text: string): string {
  return String(text)
    .replace(/\\/g, "\\\\")
    .replace(/;/g, "\\;")
    .replace(/,/g, "\\,")
    .replace(/\r\n|\r|\n/g, "\\n")
    .replace(/[\u0000-\u0008\u000B-\u001F\u007F]/g, "");
}

/** A UTC date-time: 20261208T144000Z. */
export function icsUtc(instant: Date): string {
  return instant.toISOString().replace(/\.\d{3}Z$/, "Z").replace(/[-:]/g, "");
}

function octets(char: string): number {
  const code = char.codePointAt(0)!;
  return code < 0x80 ? 1 : code < 0x800 ? 2 : code < 0x10000 ? 3 : 4;
}

/** Folds one content line at 75 octets (RFC 5545 §3.1); continuation lines start with a space. */
export function foldIcsLine(line: string): string {
  const parts: string[] = [];
  let current = "";
  let size = 0;
  for (const char of line) {
    const n = octets(char);
    const limit = parts.length === 0 ? MAX_OCTETS : MAX_OCTETS - 1;
    if (size + n > limit) {
      parts.push(current);
      current = "";
      size = 0;
    }
    current += char;
    size += n;
  }
  parts.push(current);
  return parts.join(`${CRLF} `);
}

function grams(value: number): string {
  return `${value.toFixed(2)} g`;
}

function coordinate(value: number): string {
  return value.toFixed(6);
}

function description(stop: RunExportStop, run: RunExport): string {
  const lines = [
    `${run.crewName}, stop ${stop.number} of ${run.stops.length}.`,
    `Customer: ${stop.customerName}`,
    stop.address ? `Address: ${stop.address}` : null,
    `Arrive ${stop.arriveClock}; treatment starts ${stop.startClock}.`,
    `${pluralColonies(stop.colonies)}, ${stop.broodBoxesPerColony} brood ${stop.broodBoxesPerColony === 1 ? "box" : "boxes"} each.`,
    `Dose: ${grams(stop.doseGrams)} ${run.productName} (${run.doseGramsPerBroodBox} g per brood box).`,
    `Access notes: ${stop.accessNotes.trim() || "none"}`,
    "",
    `Safety: ${SAFETY_CAUTIONS.map((c) => c.title).join("; ")}. The product label is the law.`,
  ];
  return lines.filter((line) => line !== null).join("\n");
}

/** A stable UID for one stop of one run. */
export function stopUid(run: Pick<RunExport, "runId">, stop: Pick<RunExportStop, "visitId">): string {
  return `run-${run.runId}-visit-${stop.visitId}@varroute`;
}

/** The run as an iCalendar object (text/calendar, CRLF line ends). */
export function runToIcs(run: RunExport): string {
  const lines: string[] = [
    "BEGIN:VCALENDAR",
    "VERSION:2.0",
    `PRODID:${ICS_PRODID}`,
    "CALSCALE:GREGORIAN",
    "METHOD:PUBLISH",
    `X-WR-CALNAME:${escapeIcsText(`${run.crewName} run ${run.serviceDate}`)}`,
  ];
  const stamp = icsUtc(run.generatedAt);
  for (const stop of run.stops) {
    const location = [stop.yardName, stop.address].filter((part) => part && part.trim()).join(", ");
    lines.push(
      "BEGIN:VEVENT",
      `UID:${stopUid(run, stop)}`,
      `DTSTAMP:${stamp}`,
      `DTSTART:${icsUtc(stop.arriveAt)}`,
      `DTEND:${icsUtc(stop.leaveAt)}`,
      `SEQUENCE:${Math.max(0, run.version - 1)}`,
      `SUMMARY:${escapeIcsText(`${stop.number}. ${stop.yardName}: ${pluralColonies(stop.colonies)}, ${grams(stop.doseGrams)}`)}`,
      `LOCATION:${escapeIcsText(location)}`,
      `GEO:${coordinate(stop.lat)};${coordinate(stop.lng)}`,
      `DESCRIPTION:${escapeIcsText(description(stop, run))}`,
      "STATUS:CONFIRMED",
      "TRANSP:OPAQUE",
      "END:VEVENT",
    );
  }
  lines.push("END:VCALENDAR");
  return lines.map(foldIcsLine).join(CRLF) + CRLF;
}
