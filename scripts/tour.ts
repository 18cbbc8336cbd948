/**
 * Route planner in pure tour mode on a TSPLIB instance.
 *
 *   node --import tsx scripts/tour.ts path/to/instance.tsp
 *
 * Reads an EUC_2D, ATT or GEO instance, plans it with the day planner as one crew leaving
 * from and returning to node 1, with every other node a visit with no window and no
 * service time, and prints one JSON line: {"name","n","length","ms"}.
 */

import { readFileSync } from "node:fs";
import { planTsplibTour } from "../app/domain/planner/tour-mode";
import { parseTsplib } from "../app/domain/planner/tsplib";

const path = process.argv[2];
if (!path) {
  console.error("usage: node --import tsx scripts/tour.ts path/to/instance.tsp");
  process.exit(2);
}
try {
  const instance = parseTsplib(readFileSync(path, "utf8"));
  const started = performance.now();
  const { length } = planTsplibTour(instance);
  const ms = Math.round(performance.now() - started);
  console.log(JSON.stringify({ name: instance.name, n: instance.dimension, length, ms }));
} catch (error) {
  console.error(error instanceof Error ? error.message : String(error));
  process.exit(1);
}
