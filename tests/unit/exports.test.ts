import { describe, expect, it } from "vitest";
import { escapeXml, gpxTime, runToGpx } from "~/domain/exports/gpx";
import { escapeIcsText, foldIcsLine, icsUtc, runToIcs, stopUid } from "~/domain/exports/ics";
import { fileNamePart, runExportBaseName, type RunExport } from "~/domain/exports/run-export";

function aRun(overrides: Partial<RunExport> = {}): RunExport {
  return {
    runId: 7,
    crewName: "Crew 1",
    serviceDate: "2026-12-08",
    version: 2,
    status: "published",
    doseGramsPerBroodBox: 1,
    productName: "Oxalic acid dihydrate",
    start: { label: "Shop, 12 Kiln Lane", lat: 42.428, lng: -76.478 },
    end: { label: "Lock-up <north>", lat: 42.486, lng: -76.301 },
    stops: [
      {
        visitId: 101,
        number: 1,
        yardName: `Hill & Dale "North" <upper>`,
        customerName: "Ada O'Quill",
        address: "3 Orchard Rd, Varna, NY",
        lat: 42.455,
        lng: -76.431,
        accessNotes: "Gate code 1234; dogs, friendly\nPark by the barn \\ not the lane",
        colonies: 5,
        broodBoxesPerColony: 2,
        doseGrams: 10,
        arriveAt: new Date("2026-12-08T14:12:00Z"),
        startAt: new Date("2026-12-08T14:12:00Z"),
        leaveAt: new Date("2026-12-08T14:51:30Z"),
        arriveClock: "09:12",
        startClock: "09:12",
      },
      {
        visitId: 102,
        number: 2,
        yardName: "Émile's Ünterhof — Bienenstand 蜂場",
        customerName: "Émile Zoë Brontë",
        address: null,
        lat: 42.51,
        lng: -76.35,
        accessNotes: "",
        colonies: 1,
        broodBoxesPerColony: 1,
        doseGrams: 1,
        arriveAt: new Date("2026-12-08T15:05:00Z"),
        startAt: new Date("2026-12-08T17:00:00Z"),
        leaveAt: new Date("2026-12-08T17:27:35Z"),
        arriveClock: "10:05",
        startClock: "12:00",
      },
    ],
    totalGrams: 11,
    generatedAt: new Date("2026-12-01T22:30:15.250Z"),
    ...overrides,
  };
}

describe("GPX 1.1 export", () => {
  const gpx = runToGpx(aRun());

  it("is a GPX 1.1 document by Varroute with metadata, one waypoint per stop and a route start → stops → end", () => {
    // Source: GPX 1.1 schema (topografix.com/GPX/1/1): version "1.1" fixed, creator required, this namespace.
    expect(gpx.startsWith('<?xml version="1.0" encoding="UTF-8"?>\n<gpx version="1.1" creator="Varroute" xmlns="http://www.topografix.com/GPX/1/1">\n')).toBe(true);
    expect(gpx.trimEnd().endsWith("</gpx>")).toBe(true);
    expect(gpx).toContain("<metadata>\n    <name>Crew 1 run, 2026-12-08</name>");
    expect(gpx).toContain("<time>2026-12-01T22:30:15Z</time>");
    expect(gpx.match(/<wpt /g)).toHaveLength(2);
    expect(gpx.match(/<rtept /g)).toHaveLength(4);
    const wptNames = [...gpx.matchAll(/<wpt [^>]*>\n\s*<time>([^<]+)<\/time>\n\s*<name>([^<]+)<\/name>/g)].map((m) => [m[1], m[2]]);
    expect(wptNames).toEqual([
      ["2026-12-08T14:12:00Z", "1. Hill &amp; Dale &quot;North&quot; &lt;upper&gt;"],
      ["2026-12-08T15:05:00Z", "2. Émile&apos;s Ünterhof — Bienenstand 蜂場"],
    ]);
    const route = gpx.slice(gpx.indexOf("<rte>"));
    const routeNames = [...route.matchAll(/<name>([^<]+)<\/name>/g)].map((m) => m[1]).slice(1);
    expect(routeNames).toEqual([
      "Start: Shop, 12 Kiln Lane",
      "1. Hill &amp; Dale &quot;North&quot; &lt;upper&gt;",
      "2. Émile&apos;s Ünterhof — Bienenstand 蜂場",
      "End: Lock-up &lt;north&gt;",
    ]);
    expect(route).toContain('<rtept lat="42.428000" lon="-76.478000">');
    expect(route).toContain('<rtept lat="42.486000" lon="-76.301000">');
    expect(gpx).toContain('<bounds minlat="42.428000" minlon="-76.478000" maxlat="42.510000" maxlon="-76.301000"/>');
  });

  it("puts the dose, access notes and cautions in the descriptions, escaped", () => {
    expect(gpx).toContain("Dose: 10.00 g Oxalic acid dihydrate");
    expect(gpx).toContain("Access: Gate code 1234; dogs, friendly\nPark by the barn \\ not the lane");
    expect(gpx).toContain("Safety: Respirator; Sealed eye protection; Acid-resistant gloves");
    // No markup from the data gets through.
    expect(gpx).not.toContain("<upper>");
    expect(gpx).not.toContain("<north>");
  });

  it("escapes the five XML specials and drops characters XML cannot carry", () => {
    expect(escapeXml(`a&b<c>d"e'f`)).toBe("a&amp;b&lt;c&gt;d&quot;e&apos;f");
    expect(escapeXml("bell\u0007 tab\t ok\uFFFE \uD800lone")).toBe("bell tab\t ok lone");
    expect(escapeXml("bee 🐝")).toBe("bee 🐝");
    expect(gpxTime(new Date("2026-12-08T14:12:00.999Z"))).toBe("2026-12-08T14:12:00Z");
  });

  it("refuses coordinates outside the schema's ranges and maps longitude 180 to −180", () => {
    expect(() => runToGpx(aRun({ start: { label: "x", lat: 91, lng: 0 } }))).toThrow(RangeError);
    expect(runToGpx(aRun({ end: { label: "antimeridian", lat: 0, lng: 180 } }))).toContain('lon="-180.000000"');
  });
});

describe("iCalendar export", () => {
  const ics = runToIcs(aRun());
  const physical = ics.split("\r\n");
  const unfolded = ics.replace(/\r\n /g, "").split("\r\n");

  it("ends every line with CRLF and folds lines at 75 octets without splitting a character", () => {
    // Source: RFC 5545 §3.1 (lines SHOULD NOT be longer than 75 octets, excluding the line break; folding = CRLF + one space).
    expect(ics.endsWith("\r\n")).toBe(true);
    expect(ics.replace(/\r\n/g, "")).not.toMatch(/[\r\n]/);
    for (const line of physical) {
      expect(Buffer.byteLength(line, "utf8")).toBeLessThanOrEqual(75);
      expect(Buffer.from(line, "utf8").toString("utf8")).toBe(line);
      expect(line).not.toContain("\uFFFD");
    }
    expect(physical.some((line) => line.startsWith(" "))).toBe(true);
    const long = `DESCRIPTION:${"蜂".repeat(60)}`;
    const folded = foldIcsLine(long);
    expect(folded.split("\r\n").map((l) => Buffer.byteLength(l, "utf8"))).toEqual([75, 73, 46]); // 12 + 21×3; 1 + 24×3; 1 + 15×3 (a 3-octet character never split)
    expect(folded.replace(/\r\n /g, "")).toBe(long);
    expect(foldIcsLine("SHORT:line")).toBe("SHORT:line");
  });

  it("has a calendar with one event per stop, UTC times, a stable UID and the run's version as SEQUENCE", () => {
    expect(unfolded.slice(0, 5)).toEqual(["BEGIN:VCALENDAR", "VERSION:2.0", `PRODID:-//Varroute//Run export//EN`, "CALSCALE:GREGORIAN", "METHOD:PUBLISH"]);
    expect(unfolded.filter((l) => l === "BEGIN:VEVENT")).toHaveLength(2);
    expect(unfolded.filter((l) => l.startsWith("UID:"))).toEqual(["UID:run-7-visit-101@varroute", "UID:run-7-visit-102@varroute"]);
    expect(unfolded.filter((l) => l.startsWith("DTSTART:"))).toEqual(["DTSTART:20261208T141200Z", "DTSTART:20261208T150500Z"]);
    expect(unfolded.filter((l) => l.startsWith("DTEND:"))).toEqual(["DTEND:20261208T145130Z", "DTEND:20261208T172735Z"]);
    expect(unfolded.filter((l) => l.startsWith("DTSTAMP:"))).toEqual(["DTSTAMP:20261201T223015Z", "DTSTAMP:20261201T223015Z"]);
    expect(unfolded.filter((l) => l.startsWith("SEQUENCE:"))).toEqual(["SEQUENCE:1", "SEQUENCE:1"]);
    expect(unfolded).toContain("GEO:42.455000;-76.431000");
    expect(unfolded.at(-2)).toBe("END:VCALENDAR");
    // The same stop keeps its UID when the file is made again later.
    const later = runToIcs(aRun({ generatedAt: new Date("2026-12-05T08:00:00Z"), version: 3 }));
    expect(later).toContain("UID:run-7-visit-101@varroute");
    expect(stopUid({ runId: 7 }, { visitId: 101 })).toBe("run-7-visit-101@varroute");
    expect(icsUtc(new Date("2026-11-01T06:30:00.400Z"))).toBe("20261101T063000Z");
  });

  it("escapes TEXT values and carries the summary, location, access notes and dose", () => {
    // Source: RFC 5545 §3.3.11 (backslash, semicolon, comma escaped; line breaks as \n).
    expect(escapeIcsText("a\\b;c,d\ne\r\nf")).toBe("a\\\\b\\;c\\,d\\ne\\nf");
    expect(unfolded).toContain('SUMMARY:1. Hill & Dale "North" <upper>: 5 colonies\\, 10.00 g');
    expect(unfolded).toContain("LOCATION:Hill & Dale \"North\" <upper>\\, 3 Orchard Rd\\, Varna\\, NY");
    const description = unfolded.find((l) => l.startsWith("DESCRIPTION:Crew 1\\, stop 1 of 2."))!;
    expect(description).toContain("Access notes: Gate code 1234\\; dogs\\, friendly\\nPark by the barn \\\\ not the lane");
    expect(description).toContain("Dose: 10.00 g Oxalic acid dihydrate (1 g per brood box).");
    expect(description).toContain("Safety: Respirator\\; Sealed eye protection\\;");
    expect(unfolded).toContain("SUMMARY:2. Émile's Ünterhof — Bienenstand 蜂場: 1 colony\\, 1.00 g");
  });
});

describe("export file names", () => {
  it("are plain ASCII from the crew name and date", () => {
    expect(runExportBaseName({ crewName: "Crew 1", serviceDate: "2026-12-08" })).toBe("varroute-crew-1-2026-12-08");
    expect(fileNamePart(`Équipe "Nord" / ü`)).toBe("equipe-nord-u");
    expect(fileNamePart("蜂")).toBe("run");
  });
});
