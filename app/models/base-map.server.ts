import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import type { Feature, FeatureCollection, MultiLineString, Point, Position } from "geojson";
import { feature, mesh } from "topojson-client";
import type { GeometryCollection, Topology } from "topojson-specification";

// The offline base map drawn under every map when no tile server is configured: county
// and state lines from the U.S. Census Bureau's cartographic boundaries as packaged by
// us-atlas (1:10,000,000), clipped to the box the browser asks for, with names as label
// points. Everything is read from node_modules once and kept in memory.
//
// Lines come from counties-10m.json (its states object shares arcs with the counties, so
// county lines end exactly on state lines; states-10m.json is simplified further and would
// not meet them); state names and label positions come from states-10m.json.

/** West, south, east, north in degrees (WGS84 longitude/latitude). */
export type Bbox = { west: number; south: number; east: number; north: number };

/** The business area around Ithaca, NY: what a map shows when it asks for nothing else. */
export const BUSINESS_AREA_BBOX: Bbox = { west: -77.6, south: 41.8, east: -75.4, north: 43.2 };

/** Above this size (square degrees) the county lines and names are left out: too many to read. */
export const COUNTY_DETAIL_MAX_AREA = 64;

export type BaseMapKind = "county" | "state" | "outline" | "state-label" | "county-label";
export type BaseMapProperties = { kind: BaseMapKind; name?: string };
export type BaseMapGeoJson = FeatureCollection<MultiLineString | Point, BaseMapProperties> & { bbox: [number, number, number, number] };

export type BboxResult = { ok: true; bbox: Bbox } | { ok: false; message: string };

/** Reads `west,south,east,north`; an absent or empty value means the business area. */
export function parseBbox(text: string | null | undefined): BboxResult {
  if (text == null || text.trim() === "") return { ok: true, bbox: BUSINESS_AREA_BBOX };
  const parts = text.split(",");
  if (parts.length !== 4) return { ok: false, message: "bbox must be four numbers: west,south,east,north." };
  const numbers = parts.map((p) => (p.trim() === "" ? Number.NaN : Number(p)));
  if (numbers.some((n) => !Number.isFinite(n))) return { ok: false, message: "bbox must be four numbers: west,south,east,north." };
  const [west, south, east, north] = numbers;
  if (west < -180 || east > 180 || west >= east) {
    return { ok: false, message: "bbox west must be less than east, both between -180 and 180." };
  }
  if (south < -90 || north > 90 || south >= north) {
    return { ok: false, message: "bbox south must be less than north, both between -90 and 90." };
  }
  return { ok: true, bbox: { west, south, east, north } };
}

type Box = [number, number, number, number]; // west, south, east, north
type Line = { coords: Position[]; box: Box };
type Area = { name: string; polygons: Position[][][]; box: Box; area: number };
type Atlas = { county: Line[]; state: Line[]; outline: Line[]; states: Area[]; counties: Area[] };

let atlas: Atlas | undefined;
const answers = new Map<string, BaseMapGeoJson>();
const MAX_CACHED_ANSWERS = 64;

function readAtlasFile(name: "counties-10m.json" | "states-10m.json"): Topology {
  const require = createRequire(import.meta.url);
  return JSON.parse(readFileSync(require.resolve(`us-atlas/${name}`), "utf8")) as Topology;
}

function boxOf(points: Iterable<Position>): Box {
  let w = Infinity;
  let s = Infinity;
  let e = -Infinity;
  let n = -Infinity;
  for (const [x, y] of points) {
    if (x < w) w = x;
    if (x > e) e = x;
    if (y < s) s = y;
    if (y > n) n = y;
  }
  return [w, s, e, n];
}

const boxesMeet = (a: Box, b: Box) => a[0] <= b[2] && a[2] >= b[0] && a[1] <= b[3] && a[3] >= b[1];

function linesOf(topology: Topology, object: GeometryCollection, filter: (a: { id?: string | number }, b: { id?: string | number }) => boolean): Line[] {
  return mesh(topology, object, filter as never).coordinates.map((coords) => ({ coords, box: boxOf(coords) }));
}

function areasOf(topology: Topology, object: GeometryCollection): Area[] {
  const collection = feature(topology, object) as FeatureCollection;
  const areas: Area[] = [];
  for (const f of collection.features) {
    const g = f.geometry;
    const polygons = g?.type === "Polygon" ? [g.coordinates] : g?.type === "MultiPolygon" ? g.coordinates : [];
    if (!polygons.length) continue;
    const name = String((f.properties as { name?: string } | null)?.name ?? "");
    areas.push({ name, polygons, box: boxOf(polygons.flatMap((p) => p[0])), area: polygons.reduce((sum, p) => sum + Math.abs(ringArea(p[0])), 0) });
  }
  return areas;
}

function loadAtlas(): Atlas {
  if (atlas) return atlas;
  const counties = readAtlasFile("counties-10m.json");
  const states = readAtlasFile("states-10m.json");
  const countyObject = counties.objects.counties as GeometryCollection;
  const stateObject = counties.objects.states as GeometryCollection;
  // A county line is a border between two counties of the same state (FIPS: 2 state digits).
  const stateOf = (g: { id?: string | number }) => String(g.id ?? "").slice(0, 2);
  atlas = {
    county: linesOf(counties, countyObject, (a, b) => a !== b && stateOf(a) === stateOf(b)),
    state: linesOf(counties, stateObject, (a, b) => a !== b),
    outline: linesOf(counties, stateObject, (a, b) => a === b),
    states: areasOf(states, states.objects.states as GeometryCollection),
    counties: areasOf(counties, countyObject),
  };
  return atlas;
}

const round = (x: number) => Math.round(x * 1e4) / 1e4;

/** The parts of the lines that cross `box`: every segment whose own box meets it, joined. */
function clipLines(lines: Line[], box: Box): Position[][] {
  const parts: Position[][] = [];
  for (const line of lines) {
    if (!boxesMeet(line.box, box)) continue;
    let part: Position[] | null = null;
    const c = line.coords;
    for (let i = 0; i + 1 < c.length; i++) {
      const [x1, y1] = c[i];
      const [x2, y2] = c[i + 1];
      const segment: Box = [Math.min(x1, x2), Math.min(y1, y2), Math.max(x1, x2), Math.max(y1, y2)];
      if (boxesMeet(segment, box)) {
        if (!part) {
          part = [[round(x1), round(y1)]];
          parts.push(part);
        }
        part.push([round(x2), round(y2)]);
      } else {
        part = null;
      }
    }
  }
  return parts;
}

/** Signed area of a ring by the shoelace formula, in square degrees. */
function ringArea(ring: Position[]): number {
  let sum = 0;
  for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) sum += ring[j][0] * ring[i][1] - ring[i][0] * ring[j][1];
  return sum / 2;
}

function ringCentroid(ring: Position[]): Position | null {
  const a = ringArea(ring);
  if (Math.abs(a) < 1e-12) return null;
  let cx = 0;
  let cy = 0;
  for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
    const f = ring[j][0] * ring[i][1] - ring[i][0] * ring[j][1];
    cx += (ring[j][0] + ring[i][0]) * f;
    cy += (ring[j][1] + ring[i][1]) * f;
  }
  return [cx / (6 * a), cy / (6 * a)];
}

function insideRing([x, y]: Position, ring: Position[]): boolean {
  let inside = false;
  for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
    const [xi, yi] = ring[i];
    const [xj, yj] = ring[j];
    if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

/** Sutherland–Hodgman: the part of a ring inside an axis-aligned box. */
function clipRing(ring: Position[], [w, s, e, n]: Box): Position[] {
  const edges: [(p: Position) => boolean, (a: Position, b: Position) => Position][] = [
    [(p) => p[0] >= w, (a, b) => [w, a[1] + ((b[1] - a[1]) * (w - a[0])) / (b[0] - a[0])]],
    [(p) => p[0] <= e, (a, b) => [e, a[1] + ((b[1] - a[1]) * (e - a[0])) / (b[0] - a[0])]],
    [(p) => p[1] >= s, (a, b) => [a[0] + ((b[0] - a[0]) * (s - a[1])) / (b[1] - a[1]), s]],
    [(p) => p[1] <= n, (a, b) => [a[0] + ((b[0] - a[0]) * (n - a[1])) / (b[1] - a[1]), n]],
  ];
  let out = ring;
  for (const [inside, cross] of edges) {
    const input = out;
    out = [];
    for (let i = 0; i < input.length; i++) {
      const current = input[i];
      const previous = input[(i + input.length - 1) % input.length];
      if (inside(current)) {
        if (!inside(previous)) out.push(cross(previous, current));
        out.push(current);
      } else if (inside(previous)) {
        out.push(cross(previous, current));
      }
    }
    if (!out.length) break;
  }
  return out;
}

/** Where to write an area's name inside `box`: the centroid of its largest visible piece,
 *  when that piece is at least `minArea` square degrees and the centroid falls inside it. */
function labelPoint(area: Area, box: Box, minArea: (area: Area) => number): Position | null {
  let best: { ring: Position[]; area: number } | null = null;
  for (const polygon of area.polygons) {
    const ring = clipRing(polygon[0], box);
    if (ring.length < 3) continue;
    const a = Math.abs(ringArea(ring));
    if (!best || a > best.area) best = { ring, area: a };
  }
  if (!best || best.area < minArea(area)) return null;
  const c = ringCentroid(best.ring);
  if (!c || !insideRing(c, best.ring)) return null;
  return [round(c[0]), round(c[1])];
}

const lineFeature = (kind: BaseMapKind, coordinates: Position[][]): Feature<MultiLineString, BaseMapProperties> => ({
  type: "Feature",
  properties: { kind },
  geometry: { type: "MultiLineString", coordinates },
});

const labelFeature = (kind: BaseMapKind, name: string, coordinates: Position): Feature<Point, BaseMapProperties> => ({
  type: "Feature",
  properties: { kind, name },
  geometry: { type: "Point", coordinates },
});

/** County lines, state lines, the national outline (coast and borders) and names inside
 *  `bbox`, as GeoJSON in longitude/latitude. County detail only for boxes up to
 *  COUNTY_DETAIL_MAX_AREA square degrees. Empty kinds are left out. */
export function baseMapGeoJson(bbox: Bbox = BUSINESS_AREA_BBOX): BaseMapGeoJson {
  const key = [bbox.west, bbox.south, bbox.east, bbox.north].join(",");
  const known = answers.get(key);
  if (known) return known;

  const { county, state, outline, states, counties } = loadAtlas();
  const box: Box = [bbox.west, bbox.south, bbox.east, bbox.north];
  // A small margin so lines run on past the edge instead of stopping short of it.
  const mx = (box[2] - box[0]) * 0.02;
  const my = (box[3] - box[1]) * 0.02;
  const wide: Box = [box[0] - mx, box[1] - my, box[2] + mx, box[3] + my];
  const boxArea = (box[2] - box[0]) * (box[3] - box[1]);
  const withCounties = boxArea <= COUNTY_DETAIL_MAX_AREA;

  const features: BaseMapGeoJson["features"] = [];
  const lines: [BaseMapKind, Line[]][] = [
    ["county", withCounties ? county : []],
    ["state", state],
    ["outline", outline],
  ];
  for (const [kind, source] of lines) {
    const parts = clipLines(source, wide);
    if (parts.length) features.push(lineFeature(kind, parts));
  }
  for (const area of states) {
    if (!area.name || !boxesMeet(area.box, box)) continue;
    const at = labelPoint(area, box, () => boxArea * 0.05);
    if (at) features.push(labelFeature("state-label", area.name, at));
  }
  if (withCounties) {
    for (const area of counties) {
      if (!area.name || !boxesMeet(area.box, box)) continue;
      // Only counties mostly inside the box, so names do not pile up along its edges.
      const at = labelPoint(area, box, (a) => a.area * 0.6);
      if (at) features.push(labelFeature("county-label", area.name, at));
    }
  }

  const answer: BaseMapGeoJson = { type: "FeatureCollection", bbox: box, features };
  if (answers.size >= MAX_CACHED_ANSWERS) answers.delete(answers.keys().next().value as string);
  answers.set(key, answer);
  return answer;
}
