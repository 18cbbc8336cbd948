/**
 * The day planner's heuristic for days too big for the exact DP.
 *
 * 1. Construction: each crew starts with its locked stops; the other visits are inserted at
 *    their cheapest feasible place, most colonies first, then local search (local-search.ts).
 * 2. Ruin and recreate (Schrimpf et al. 2000; string removals as in Christiaens & Vanden
 *    Berghe 2020): remove some served visits (random ones, ones near each other, a stretch
 *    of a route, a whole route, now and then all), reinsert left-out visits greedily in a
 *    randomised order with occasional "blinks" (skipped positions) and sometimes one crew
 *    kept out, then local search. A result is kept if it is better, or serves as many
 *    colonies with drive within a shrinking margin of the best (record-to-record travel,
 *    Dueck 1993). A fixed number of rounds from a seeded generator: no clock, reproducible.
 * 3. Polish: exact best responses by the subset DP (one, two or three crews with the
 *    left-out visits they could take, while the pool has ≤ EXACT_ROUTE_MAX visits); routes
 *    too long for the DP try the TSP solver's order (kept only if feasible and shorter);
 *    local search again; repeat until nothing changes. Every route of ≤ EXACT_ROUTE_MAX
 *    stops ends in its optimal order.
 */

import { bestOrder, EXACT_ROUTE_MAX, solveCrewsExact } from "./exact";
import { compareSnapshots, DaySolution, type Snapshot } from "./local-search";
import { type Problem, TIME_EPS, travel } from "./problem";
import { createRandom, type Random, shuffleInPlace } from "./random";
import { routeCost } from "./schedule";
import { solveTour } from "./tour";

export interface HeuristicOptions {
  seed: number;
  iterations?: number;
}

/** Default ruin-and-recreate rounds: more for small days, fewer for long routes. */
export function defaultIterations(candidateCount: number): number {
  return Math.max(60, Math.min(400, Math.round(8000 / Math.max(1, candidateCount))));
}

export function solveDayHeuristic(
  p: Problem,
  candidates: readonly number[],
  allowed: Uint8Array,
  keptLocked: readonly (readonly number[])[],
  options: HeuristicOptions,
): number[][] {
  const random = createRandom(options.seed);
  const iterations = options.iterations ?? defaultIterations(candidates.length);
  const sol = new DaySolution(p, allowed, candidates);
  for (let c = 0; c < p.crewCount; c++) sol.setRoute(c, [...keptLocked[c]], routeCost(p, c, keptLocked[c]));
  sol.localSearch();

  let best = sol.snapshot();
  let current = best;
  for (let it = 0; it < iterations; it++) {
    sol.restore(current);
    ruin(sol, random);
    recreate(sol, random);
    sol.localSearch();
    const trial = sol.snapshot();
    const margin = 0.02 * (1 - it / iterations);
    if (compareSnapshots(p, trial, best) < 0) {
      best = trial;
      current = trial;
    } else if (trial.colonies === best.colonies && trial.drive <= best.drive * (1 + margin) + TIME_EPS) {
      current = trial;
    } else if (compareSnapshots(p, current, best) !== 0 && random.next() < 0.1) {
      current = best;
    }
  }
  sol.restore(best);
  polish(sol, options.seed);
  return sol.routes.map((r) => [...r]);
}

function ruin(sol: DaySolution, random: Random): void {
  const p = sol.p;
  const served = sol.candidates.filter((v) => sol.crewOf[v] >= 0 && p.lockCrew[v] < 0);
  if (served.length === 0) return;
  const most = Math.max(5, Math.min(20, Math.ceil(0.6 * served.length)));
  const count = 1 + random.int(Math.min(most, served.length));
  const strategy = random.next();
  let chosen: number[];
  if (strategy < 0.04) {
    // Everything: a fresh randomised construction.
    chosen = served;
  } else if (strategy < 0.12) {
    // A whole route.
    const seed = served[random.int(served.length)];
    chosen = [...sol.routes[sol.crewOf[seed]]];
  } else if (strategy < 0.4) {
    chosen = shuffleInPlace([...served], random).slice(0, count);
  } else if (strategy < 0.75) {
    // Related: the served visits closest to a random plannable visit.
    const seed = sol.candidates[random.int(sol.candidates.length)];
    const from = p.point[seed];
    const closeness = (v: number): number => travel(p, from, p.point[v]) + travel(p, p.point[v], from);
    chosen = [...served].sort((a, b) => closeness(a) - closeness(b) || a - b).slice(0, count);
  } else {
    // A stretch of one route around a random served visit.
    const seed = served[random.int(served.length)];
    const route = sol.routes[sol.crewOf[seed]];
    const at = route.indexOf(seed);
    const from = Math.max(0, Math.min(at - random.int(count), route.length - count));
    chosen = route.slice(from, from + count);
  }
  sol.remove(chosen);
}

function recreate(sol: DaySolution, random: Random): void {
  const p = sol.p;
  const left = sol.unassigned();
  const keys = new Map<number, number>();
  const strategy = random.next();
  for (const v of left) {
    let key: number;
    if (strategy < 0.5) key = -p.colonies[v] * 1e3 + random.next(); // most colonies first
    else if (strategy < 0.7) key = random.next();
    else if (strategy < 0.85) key = p.latestStart[v] + random.next(); // tightest window first
    else key = -travel(p, p.crewStart[0], p.point[v]) + random.next(); // farthest first
    keys.set(v, key);
  }
  left.sort((a, b) => keys.get(a)! - keys.get(b)! || a - b);
  // Now and then keep one crew out of the greedy pass, so work moves between crews
  // (local search lets it back in afterwards).
  const banned = p.crewCount > 1 && random.next() < 0.3 ? random.int(p.crewCount) : -1;
  const blink = (): boolean => random.next() < 0.01;
  for (const v of left) {
    const best = sol.bestInsertion(v, blink, banned);
    if (best) sol.insertAt(best[0], best[1], v, best[2]);
  }
}

/**
 * Intensification to a stable point: exact best responses of every crew, pair and triple
 * of crews whose stops and candidates fit the DP (below), TSP orders for routes too long
 * for it, and local search again.
 */
export function polish(sol: DaySolution, seed: number): void {
  const crews = sol.p.crewCount;
  const exactMove = memoisedExactMove();
  for (let round = 0; round < 10; round++) {
    const before: Snapshot = sol.snapshot();
    for (let c = 0; c < crews; c++) {
      if (!exactMove(sol, [c]) && sol.routes[c].length > EXACT_ROUTE_MAX) reorderLongRoute(sol, c, seed);
    }
    for (let c1 = 0; c1 < crews; c1++) {
      for (let c2 = c1 + 1; c2 < crews; c2++) {
        exactMove(sol, [c1, c2]);
        for (let c3 = c2 + 1; c3 < crews; c3++) exactMove(sol, [c1, c2, c3]);
      }
    }
    sol.localSearch();
    if (compareSnapshots(sol.p, sol.snapshot(), before) === 0) break;
  }
  // Make the guarantees explicit: every route of ≤ EXACT_ROUTE_MAX stops in its optimal
  // order, and no left-out visit fits anywhere (a shorter order may have made room).
  for (let round = 0; round < 10; round++) {
    for (let c = 0; c < crews; c++) {
      const route = sol.routes[c];
      if (route.length < 2 || route.length > EXACT_ROUTE_MAX) continue;
      const best = bestOrder(sol.p, c, route);
      if (best && best.drive < sol.drives[c] - TIME_EPS) sol.setRoute(c, best.route, best.drive);
    }
    if (!sol.insertLeftOut()) break;
  }
}

/**
 * Exact best response of some crews: their stops plus the left-out visits they could take
 * (most colonies first, up to EXACT_ROUTE_MAX in all) are re-planned optimally for these
 * crews by the subset DP, the other crews' routes fixed. Applied if better; true if so.
 */
export function exactMove(sol: DaySolution, crews: readonly number[], tried?: Set<string>): boolean {
  const p = sol.p;
  const inRoutes = crews.flatMap((c) => sol.routes[c]);
  if (inRoutes.length > EXACT_ROUTE_MAX) return false;
  const extra = sol
    .unassigned()
    .filter((v) => crews.some((c) => sol.isAllowed(c, v)))
    .sort((a, b) => p.colonies[b] - p.colonies[a] || a - b)
    .slice(0, EXACT_ROUTE_MAX - inRoutes.length);
  if (extra.length === 0 && inRoutes.length < 2) return false;
  // The same crews with the same routes and pool give the same answer: skip repeats.
  const key = `${crews.map((c) => sol.routes[c].join(",")).join("|")}+${extra.join(",")}`;
  if (tried) {
    if (tried.has(key)) return false;
    tried.add(key);
  }
  const pool = [...inRoutes, ...extra].sort((a, b) => a - b);
  const required = crews.map((c) => sol.routes[c].filter((v) => p.lockCrew[v] === c));
  const routes = solveCrewsExact(p, crews, pool, (c, v) => sol.isAllowed(c, v), required);
  const drives = routes.map((r, k) => routeCost(p, crews[k], r));
  const sum = (values: number[]): number => values.reduce((a, b) => a + b, 0);
  const before: Snapshot = {
    routes: crews.map((c) => sol.routes[c]),
    colonies: sum(inRoutes.map((v) => p.colonies[v])),
    drive: sum(crews.map((c) => sol.drives[c])),
  };
  const after: Snapshot = { routes, colonies: sum(routes.flat().map((v) => p.colonies[v])), drive: sum(drives) };
  if (compareSnapshots(p, after, before) >= 0) return false;
  crews.forEach((c, k) => sol.setRoute(c, routes[k], drives[k]));
  return true;
}

/** exactMove remembering what it has already tried (within one polish). */
function memoisedExactMove(): (sol: DaySolution, crews: readonly number[]) => boolean {
  const tried = new Set<string>();
  return (sol, crews) => exactMove(sol, crews, tried);
}

function reorderLongRoute(sol: DaySolution, crew: number, seed: number): void {
  const better = tourOrder(sol.p, crew, sol.routes[crew], seed);
  if (better && better.drive < sol.drives[crew] - TIME_EPS) sol.setRoute(crew, better.route, better.drive);
}

/**
 * The TSP solver's order of a long route, on the symmetrised travel times (start and end
 * joined by a forced edge when they differ), tried both ways round; null unless feasible.
 */
function tourOrder(p: Problem, crew: number, route: readonly number[], seed: number): { route: number[]; drive: number } | null {
  const start = p.crewStart[crew];
  const end = p.crewEnd[crew];
  const offset = start === end ? 1 : 2;
  const points = [start, ...(offset === 2 ? [end] : []), ...route.map((v) => p.point[v])];
  const size = points.length;
  const dist = points.map((a) => points.map((b) => (travel(p, a, b) + travel(p, b, a)) / 2));
  if (offset === 2) {
    let sum = 1;
    for (const row of dist) for (const d of row) sum += d;
    dist[0][1] = -sum;
    dist[1][0] = -sum;
  }
  const tour = solveTour(dist, { seed }).tour;
  let order = tour.slice(1);
  if (offset === 2) {
    if (order[0] === 1) order = order.reverse();
    order = order.filter((node) => node !== 1);
    if (order.length !== size - 2) return null;
  }
  const visits = order.map((node) => route[node - offset]);
  let bestRoute: number[] | null = null;
  let bestDrive = Infinity;
  for (const candidate of [visits, offset === 1 ? [...visits].reverse() : visits]) {
    const drive = routeCost(p, crew, candidate);
    if (drive < bestDrive) {
      bestDrive = drive;
      bestRoute = candidate;
    }
  }
  return bestRoute ? { route: bestRoute, drive: bestDrive } : null;
}
