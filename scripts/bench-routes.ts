/**
 * Route planner benchmark on the TSPLIB instances in tests/fixtures/tsplib.
 *
 *   node --import tsx scripts/bench-routes.ts [runs]
 *
 * For each instance: the planner's tour length in pure tour mode (the day planner with one
 * crew, no windows, no service time) and its gap to the proven optimum in optima.txt, and
 * the median time over `runs` runs (default 5, seeds 1…runs); the same for the
 * nearest-neighbour baseline. Prints figures; asserts nothing.
 */

import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { nearestNeighbourTour } from "../app/domain/planner/tour";
import { planMatrixTour } from "../app/domain/planner/tour-mode";
import { buildDistanceMatrix, parseOptima, parseTsplib } from "../app/domain/planner/tsplib";

const dir = join(import.meta.dirname, "..", "tests", "fixtures", "tsplib");
const runs = Math.max(1, Number(process.argv[2] ?? 5) || 5);
const optima = parseOptima(readFileSync(join(dir, "optima.txt"), "utf8"));

const median = (values: number[]): number => {
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
};
const gap = (length: number, optimum: number): number => (100 * (length - optimum)) / optimum;

interface Row {
  name: string;
  n: number;
  optimum: number;
  planner: number;
  plannerGaps: number[];
  plannerMs: number;
  nn: number;
  nnGap: number;
  nnMs: number;
}

const files = readdirSync(dir)
  .filter((f) => f.endsWith(".tsp"))
  .map((f) => parseTsplib(readFileSync(join(dir, f), "utf8")))
  .sort((a, b) => a.dimension - b.dimension || a.name.localeCompare(b.name));

const rows: Row[] = [];
for (const instance of files) {
  const optimum = optima.get(instance.name);
  if (optimum === undefined) continue;
  const matrix = buildDistanceMatrix(instance);
  const lengths: number[] = [];
  const times: number[] = [];
  for (let seed = 1; seed <= runs; seed++) {
    const started = performance.now();
    lengths.push(planMatrixTour(matrix, seed).length);
    times.push(performance.now() - started);
  }
  const nnTimes: number[] = [];
  let nn = 0;
  for (let r = 0; r < runs; r++) {
    const started = performance.now();
    nn = nearestNeighbourTour(matrix).length;
    nnTimes.push(performance.now() - started);
  }
  rows.push({
    name: instance.name,
    n: instance.dimension,
    optimum,
    planner: median(lengths),
    plannerGaps: lengths.map((l) => gap(l, optimum)),
    plannerMs: median(times),
    nn,
    nnGap: gap(nn, optimum),
    nnMs: median(nnTimes),
  });
}

const header = ["instance", "n", "optimum", "planner", "gap %", "worst %", "median ms", "nearest-nb", "gap %", "median ms"];
const table = rows.map((r) => [
  r.name,
  String(r.n),
  String(r.optimum),
  String(r.planner),
  median(r.plannerGaps).toFixed(2),
  Math.max(...r.plannerGaps).toFixed(2),
  r.plannerMs.toFixed(1),
  String(r.nn),
  r.nnGap.toFixed(2),
  r.nnMs.toFixed(2),
]);
const mean = (values: number[]): number => values.reduce((a, b) => a + b, 0) / values.length;
table.push([
  "mean",
  "",
  "",
  "",
  mean(rows.map((r) => median(r.plannerGaps))).toFixed(2),
  Math.max(...rows.map((r) => Math.max(...r.plannerGaps))).toFixed(2),
  mean(rows.map((r) => r.plannerMs)).toFixed(1),
  "",
  mean(rows.map((r) => r.nnGap)).toFixed(2),
  mean(rows.map((r) => r.nnMs)).toFixed(2),
]);
const widths = header.map((h, i) => Math.max(h.length, ...table.map((row) => row[i].length)));
const line = (cells: string[]): string => `| ${cells.map((c, i) => (i === 0 ? c.padEnd(widths[i]) : c.padStart(widths[i]))).join(" | ")} |`;
console.log(`TSPLIB tour benchmark: planner (pure tour mode, ${runs} runs, seeds 1–${runs}) vs nearest neighbour`);
console.log(line(header));
console.log(`|${widths.map((w, i) => (i === 0 ? ":" : "") + "-".repeat(w + 1 - (i === 0 ? 1 : 0)) + (i === 0 ? "-" : ":")).join("|")}|`);
for (const row of table) console.log(line(row));
console.log("Optima: TSPLIB95 (Reinelt 1991), tests/fixtures/tsplib/optima.txt. Gap = (length − optimum) / optimum.");
