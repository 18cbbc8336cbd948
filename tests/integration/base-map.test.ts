import type { MultiLineString, Point } from "geojson";
import { describe, expect, it } from "vitest";
import { BUSINESS_AREA_BBOX, baseMapGeoJson, parseBbox } from "~/models/base-map.server";

// The offline base map, built from us-atlas (U.S. Census Bureau cartographic boundaries).

const linesOf = (kind: string, bbox = BUSINESS_AREA_BBOX) =>
  baseMapGeoJson(bbox)
    .features.filter((f) => f.properties.kind === kind)
    .flatMap((f) => (f.geometry as MultiLineString).coordinates);

describe("base map", () => {
  it("draws New York's outline, its counties and its name in the business area", () => {
    expect(parseBbox(null)).toEqual({ ok: true, bbox: BUSINESS_AREA_BBOX });
    const map = baseMapGeoJson(BUSINESS_AREA_BBOX);
    expect(map.type).toBe("FeatureCollection");
    // The New York–Pennsylvania line runs along the 42nd parallel west of the Delaware River
    // (from memory).
    const stateLinePoints = linesOf("state").flat();
    const onTheParallel = stateLinePoints.filter(([lng, lat]) => lng > -77.5 && lng < -75.5 && Math.abs(lat - 42) < 0.02);
    expect(onTheParallel.length).toBeGreaterThan(3);
    expect(linesOf("county").length).toBeGreaterThan(5);
    const names = map.features.filter((f) => f.properties.kind === "state-label").map((f) => f.properties.name);
    expect(names).toContain("New York");
    // Tompkins County (Ithaca) is named, at a point inside the box.
    const tompkins = map.features.find((f) => f.properties.kind === "county-label" && f.properties.name === "Tompkins");
    const [lng, lat] = (tompkins?.geometry as Point).coordinates;
    expect(lng).toBeGreaterThan(-76.8);
    expect(lng).toBeLessThan(-76.2);
    expect(lat).toBeGreaterThan(42.2);
    expect(lat).toBeLessThan(42.7);
  });

  it("keeps only segments near the box, so the answer stays small", () => {
    const all = linesOf("county").flat();
    for (const [lng, lat] of all) {
      expect(lng).toBeGreaterThan(-77.6 - 0.3);
      expect(lng).toBeLessThan(-75.4 + 0.3);
      expect(lat).toBeGreaterThan(41.8 - 0.3);
      expect(lat).toBeLessThan(43.2 + 0.3);
    }
    expect(JSON.stringify(baseMapGeoJson()).length).toBeLessThan(40_000);
  });

  it("returns no county lines over the open Pacific", () => {
    const parsed = parseBbox("-150,30,-130,40");
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    const map = baseMapGeoJson(parsed.bbox);
    expect(map.features.filter((f) => f.properties.kind === "county")).toEqual([]);
    expect(map.features).toEqual([]);
  });

  it("leaves county detail out of a box as large as the country", () => {
    const map = baseMapGeoJson({ west: -125, south: 24, east: -66, north: 50 });
    expect(map.features.some((f) => f.properties.kind === "county")).toBe(false);
    expect(map.features.some((f) => f.properties.kind === "state")).toBe(true);
  });

  it.each(["", "  "])("uses the business area when no bbox is given (%j)", (text) => {
    expect(parseBbox(text)).toEqual({ ok: true, bbox: BUSINESS_AREA_BBOX });
  });

  it.each([
    ["-77,42,-76", /four numbers/],
    ["-77,42,-76,43,1", /four numbers/],
    ["west,42,-76,43", /four numbers/],
    ["-77,,-76,43", /four numbers/],
    ["-76,42,-77,43", /west must be less than east/],
    ["-190,42,-76,43", /between -180 and 180/],
    ["-77,43,-76,42", /south must be less than north/],
    ["-77,42,-76,95", /between -90 and 90/],
  ])("refuses the malformed bbox %j", (text, message) => {
    const parsed = parseBbox(text);
    expect(parsed.ok).toBe(false);
    if (parsed.ok) return;
    expect(parsed.message).toMatch(message);
  });
});
