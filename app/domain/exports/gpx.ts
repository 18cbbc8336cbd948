/**
 * A run as GPX 1.1 (https://www.topografix.com/GPX/1/1/), for navigation devices and apps:
 * one waypoint per stop in run order, and a route from the crew's start point through the
 * stops to its end point. Times are UTC instants (xsd:dateTime with "Z"); every text is
 * XML-escaped, and characters XML 1.0 cannot carry are dropped. The output validates
 * against the GPX 1.1 schema (tests/integration/exports-validate.test.ts).
 */

import { SAFETY_CAUTIONS } from "../safety";
import { pluralColonies, type RunExport, type RunExportPlace, type RunExportStop } from "./run-export";

export const GPX_NAMESPACE = "http://www.topografix.com/GPX/1/1";

// XML 1.0 Char production: tab, newline, carriage return, and U+0020 upwards, less the
// surrogates (unless paired) and U+FFFE/U+FFFF.
const NOT_XML_CHAR = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g;
const XML_ESCAPES: Record<string, string> = { "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&apos;" };

/** Escapes text for XML element content and attribute values. */
export function escapeXml(text: string): string {
  return String(text).replace(NOT_XML_CHAR, "").replace(/[&<>"']/g, (c) => XML_ESCAPES[c]);
}

/** An xsd:dateTime in UTC, whole seconds: 2026-12-08T14:40:00Z. */
export function gpxTime(instant: Date): string {
  return instant.toISOString().replace(/\.\d{3}Z$/, "Z");
}

function latitude(lat: number): string {
  if (!Number.isFinite(lat) || lat < -90 || lat > 90) throw new RangeError(`latitude out of range: ${lat}`);
  return lat.toFixed(6);
}

function longitude(lng: number): string {
  if (!Number.isFinite(lng) || lng < -180 || lng > 180) throw new RangeError(`longitude out of range: ${lng}`);
  // GPX longitudes run from −180 (included) to 180 (excluded).
  return (lng === 180 ? -180 : lng).toFixed(6);
}

function element(name: string, text: string | null | undefined, indent: string): string {
  if (text == null || text.trim() === "") return "";
  return `${indent}<${name}>${escapeXml(text)}</${name}>\n`;
}

function grams(value: number): string {
  return `${value.toFixed(2)} g`;
}

function stopName(stop: RunExportStop): string {
  return `${stop.number}. ${stop.yardName}`;
}

function stopDescription(stop: RunExportStop, run: RunExport): string {
  const lines = [
    `Customer: ${stop.customerName}`,
    stop.address ? `Address: ${stop.address}` : null,
    `Arrive ${stop.arriveClock}, start ${stop.startClock}`,
    `${pluralColonies(stop.colonies)}, ${stop.broodBoxesPerColony} brood ${stop.broodBoxesPerColony === 1 ? "box" : "boxes"} each`,
    `Dose: ${grams(stop.doseGrams)} ${run.productName}`,
    stop.accessNotes.trim() ? `Access: ${stop.accessNotes.trim()}` : null,
  ];
  return lines.filter(Boolean).join("\n");
}

function point(tag: "wpt" | "rtept", place: { lat: number; lng: number }, children: string, indent: string): string {
  return `${indent}<${tag} lat="${latitude(place.lat)}" lon="${longitude(place.lng)}">\n${children}${indent}</${tag}>\n`;
}

function placePoint(label: string, place: RunExportPlace, indent: string): string {
  return point("rtept", place, element("name", label, `${indent}  `) + element("desc", place.label, `${indent}  `), indent);
}

function bounds(run: RunExport): string {
  const places = [run.start, run.end, ...run.stops];
  const lats = places.map((p) => p.lat);
  const lngs = places.map((p) => p.lng);
  return (
    `    <bounds minlat="${latitude(Math.min(...lats))}" minlon="${longitude(Math.min(...lngs))}" ` +
    `maxlat="${latitude(Math.max(...lats))}" maxlon="${longitude(Math.max(...lngs))}"/>\n`
  );
}

/** The run as a GPX 1.1 document (UTF-8 text). */
export function runToGpx(run: RunExport): string {
  const colonies = run.stops.reduce((sum, s) => sum + s.colonies, 0);
  const title = `${run.crewName} run, ${run.serviceDate}`;
  const summary =
    `${run.stops.length} ${run.stops.length === 1 ? "stop" : "stops"}, ${pluralColonies(colonies)}, ` +
    `${grams(run.totalGrams)} ${run.productName} to carry. ` +
    `Safety: ${SAFETY_CAUTIONS.map((c) => c.title).join("; ")}.`;
  let xml = `<?xml version="1.0" encoding="UTF-8"?>\n`;
  xml += `<gpx version="1.1" creator="Varroute" xmlns="${GPX_NAMESPACE}">\n`;
  xml += `  <metadata>\n`;
  xml += element("name", title, "    ");
  xml += element("desc", summary, "    ");
  xml += `    <time>${gpxTime(run.generatedAt)}</time>\n`;
  xml += element("keywords", "Varroute, Varroa treatment, oxalic acid vapor", "    ");
  xml += bounds(run);
  xml += `  </metadata>\n`;
  for (const stop of run.stops) {
    const children =
      `    <time>${gpxTime(stop.arriveAt)}</time>\n` +
      element("name", stopName(stop), "    ") +
      element("cmt", `Arrive ${stop.arriveClock}; ${pluralColonies(stop.colonies)}; ${grams(stop.doseGrams)}`, "    ") +
      element("desc", stopDescription(stop, run), "    ") +
      element("type", "Apiary", "    ");
    xml += point("wpt", stop, children, "  ");
  }
  xml += `  <rte>\n`;
  xml += element("name", title, "    ");
  xml += element("desc", summary, "    ");
  xml += placePoint(`Start: ${run.start.label}`, run.start, "    ");
  for (const stop of run.stops) {
    xml += point("rtept", stop, `      <time>${gpxTime(stop.arriveAt)}</time>\n` + element("name", stopName(stop), "      "), "    ");
  }
  xml += placePoint(`End: ${run.end.label}`, run.end, "    ");
  xml += `  </rte>\n`;
  xml += `</gpx>\n`;
  return xml;
}
