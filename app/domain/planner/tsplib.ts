/**
 * TSPLIB instances: parsing and the TSPLIB95 distance functions.
 *
 * Used to check the route planner against published optimal tours (Reinelt 1991, TSPLIB95).
 * Only what the benchmark instances need is supported: TYPE TSP with NODE_COORD_SECTION and
 * EDGE_WEIGHT_TYPE EUC_2D, ATT or GEO. Pure: takes text, returns data (no file access).
 *
 * Distances follow the TSPLIB95 documentation exactly, including its integer rounding:
 * - EUC_2D: nint(√(dx² + dy²))
 * - ATT (pseudo-Euclidean): r = √((dx² + dy²)/10), t = nint(r), d = t + 1 if t < r else t
 * - GEO: degrees.minutes coordinates; deg = trunc(x) (rounding it is a known pitfall),
 *   π = 3.141592, RRR = 6378.388 km, d = trunc(RRR·acos(½((1+q1)q2 − (1−q1)q3)) + 1)
 * where nint(x) = (int)(x + 0.5) as in the reference C code.
 */

export const TSPLIB_EDGE_WEIGHT_TYPES = ["EUC_2D", "ATT", "GEO"] as const;
export type TsplibEdgeWeightType = (typeof TSPLIB_EDGE_WEIGHT_TYPES)[number];

export interface TsplibPoint {
  x: number;
  y: number;
}

export interface TsplibInstance {
  /** NAME, with a trailing ".tsp" removed (ulysses16 is named "ulysses16.tsp" in its file). */
  name: string;
  type: string;
  comment: string | null;
  dimension: number;
  edgeWeightType: TsplibEdgeWeightType;
  /** Coordinates of nodes 1…n at indexes 0…n−1. */
  points: TsplibPoint[];
}

/** π as TSPLIB95 fixes it for GEO distances (not Math.PI). */
export const TSPLIB_GEO_PI = 3.141592;
/** Earth radius in km used by TSPLIB95 GEO distances. */
export const TSPLIB_GEO_RRR = 6378.388;

/** TSPLIB's nint: (int)(x + 0.5), i.e. round half up for the non-negative values used here. */
export function nint(x: number): number {
  return Math.trunc(x + 0.5);
}

export function euc2dDistance(a: TsplibPoint, b: TsplibPoint): number {
  const dx = a.x - b.x;
  const dy = a.y - b.y;
  return nint(Math.sqrt(dx * dx + dy * dy));
}

export function attDistance(a: TsplibPoint, b: TsplibPoint): number {
  const dx = a.x - b.x;
  const dy = a.y - b.y;
  const r = Math.sqrt((dx * dx + dy * dy) / 10);
  const t = nint(r);
  return t < r ? t + 1 : t;
}

/** A TSPLIB GEO coordinate (DDD.MM, degrees and minutes) in radians, with deg = trunc(x). */
export function geoRadians(coordinate: number): number {
  const deg = Math.trunc(coordinate);
  const min = coordinate - deg;
  return (TSPLIB_GEO_PI * (deg + (5 * min) / 3)) / 180;
}

/** GEO distance in km; x is latitude and y longitude, both in TSPLIB's DDD.MM form. */
export function geoDistance(a: TsplibPoint, b: TsplibPoint): number {
  const latA = geoRadians(a.x);
  const lonA = geoRadians(a.y);
  const latB = geoRadians(b.x);
  const lonB = geoRadians(b.y);
  const q1 = Math.cos(lonA - lonB);
  const q2 = Math.cos(latA - latB);
  const q3 = Math.cos(latA + latB);
  return Math.trunc(TSPLIB_GEO_RRR * Math.acos(0.5 * ((1 + q1) * q2 - (1 - q1) * q3)) + 1);
}

export function distanceFunction(type: TsplibEdgeWeightType): (a: TsplibPoint, b: TsplibPoint) => number {
  switch (type) {
    case "EUC_2D":
      return euc2dDistance;
    case "ATT":
      return attDistance;
    case "GEO":
      return geoDistance;
  }
}

/** The full symmetric integer distance matrix (zero diagonal) of an instance. */
export function buildDistanceMatrix(instance: Pick<TsplibInstance, "edgeWeightType" | "points">): number[][] {
  const distance = distanceFunction(instance.edgeWeightType);
  const n = instance.points.length;
  const matrix: number[][] = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const d = distance(instance.points[i], instance.points[j]);
      matrix[i][j] = d;
      matrix[j][i] = d;
    }
  }
  return matrix;
}

const SECTION_KEYWORDS = new Set([
  "NODE_COORD_SECTION",
  "DEPOT_SECTION",
  "DEMAND_SECTION",
  "EDGE_DATA_SECTION",
  "FIXED_EDGES_SECTION",
  "DISPLAY_DATA_SECTION",
  "TOUR_SECTION",
  "EDGE_WEIGHT_SECTION",
]);

/** Parses a TSPLIB .tsp file's text. Throws on anything it cannot use faithfully. */
export function parseTsplib(text: string): TsplibInstance {
  const lines = text.split(/\r?\n/);
  const spec = new Map<string, string>();
  let points: (TsplibPoint | undefined)[] | null = null;
  let i = 0;
  while (i < lines.length) {
    const line = lines[i].trim();
    i++;
    if (line === "") continue;
    if (line === "EOF") break;
    const keyword = line.split(/[\s:]/)[0].toUpperCase();
    if (SECTION_KEYWORDS.has(keyword)) {
      if (keyword !== "NODE_COORD_SECTION") {
        throw new Error(`TSPLIB: ${keyword} is not supported`);
      }
      const dimension = readDimension(spec);
      points = new Array<TsplibPoint | undefined>(dimension).fill(undefined);
      let read = 0;
      while (i < lines.length && read < dimension) {
        const row = lines[i].trim();
        if (row === "") {
          i++;
          continue;
        }
        if (/^[A-Za-z]/.test(row)) break; // EOF or the next keyword
        i++;
        const parts = row.split(/\s+/);
        if (parts.length < 3) throw new Error(`TSPLIB: bad coordinate line "${row}"`);
        const id = Number(parts[0]);
        const x = Number(parts[1]);
        const y = Number(parts[2]);
        if (!Number.isInteger(id) || id < 1 || id > dimension) {
          throw new Error(`TSPLIB: node id ${parts[0]} outside 1…${dimension}`);
        }
        if (!Number.isFinite(x) || !Number.isFinite(y)) throw new Error(`TSPLIB: bad coordinates in "${row}"`);
        if (points[id - 1]) throw new Error(`TSPLIB: node ${id} given twice`);
        points[id - 1] = { x, y };
        read++;
      }
      continue;
    }
    const colon = line.indexOf(":");
    if (colon < 0) throw new Error(`TSPLIB: unexpected line "${line}"`);
    spec.set(line.slice(0, colon).trim().toUpperCase(), line.slice(colon + 1).trim());
  }

  const type = spec.get("TYPE") ?? "";
  if (type.toUpperCase() !== "TSP") throw new Error(`TSPLIB: TYPE must be TSP, got "${type}"`);
  const dimension = readDimension(spec);
  const edgeWeightType = (spec.get("EDGE_WEIGHT_TYPE") ?? "").toUpperCase();
  if (!(TSPLIB_EDGE_WEIGHT_TYPES as readonly string[]).includes(edgeWeightType)) {
    throw new Error(`TSPLIB: EDGE_WEIGHT_TYPE "${edgeWeightType}" is not supported (EUC_2D, ATT, GEO)`);
  }
  if (!points) throw new Error("TSPLIB: NODE_COORD_SECTION is missing");
  const missing = points.findIndex((p) => p === undefined);
  if (missing >= 0) throw new Error(`TSPLIB: node ${missing + 1} has no coordinates`);
  return {
    name: (spec.get("NAME") ?? "").replace(/\.tsp$/i, ""),
    type: "TSP",
    comment: spec.get("COMMENT") ?? null,
    dimension,
    edgeWeightType: edgeWeightType as TsplibEdgeWeightType,
    points: points as TsplibPoint[],
  };
}

function readDimension(spec: Map<string, string>): number {
  const dimension = Number(spec.get("DIMENSION"));
  if (!Number.isInteger(dimension) || dimension < 1) {
    throw new Error(`TSPLIB: DIMENSION must be a positive integer, got "${spec.get("DIMENSION") ?? ""}"`);
  }
  return dimension;
}

/** Parses optima.txt lines of the form "name : length" (blank lines and # comments ignored). */
export function parseOptima(text: string): Map<string, number> {
  const optima = new Map<string, number>();
  for (const raw of text.split(/\r?\n/)) {
    const line = raw.trim();
    if (line === "" || line.startsWith("#")) continue;
    const match = /^(\S+)\s*:\s*(\d+)\s*$/.exec(line);
    if (!match) throw new Error(`optima: bad line "${line}"`);
    optima.set(match[1], Number(match[2]));
  }
  return optima;
}
