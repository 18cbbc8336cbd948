/**
 * Exact day planning by dynamic programming over subsets.
 *
 * Per crew: for a list of m ≤ 12 candidate visits, a label-setting DP over states
 * (set served, last stop). A label is (drive so far, earliest time the crew can leave the
 * last stop); one label dominates another when it is no worse in both. Because waiting
 * for a window can make a cheaper partial route finish later, each state keeps its whole
 * Pareto front, so the result is the least-drive feasible order for every subset
 * (time-window TSP as in Dumas, Desrosiers, Gelinas & Solomon 1995). Locked visits may only
 * be added in their locked order. Labels that cannot be back by the end of the working day
 * even by the quickest way are dropped, and so are sets past the crew's daily limits
 * (colonies, grams): a limit only grows with the set, so no extension of such a set fits.
 *
 * Whole day: with the best drive f_c(S) of every crew c and subset S, a second DP over
 * crews splits the plannable visits: g_c(U) = min over S ⊆ U of g_{c−1}(U∖S) + f_c(S)
 * (3^N work). The plan then maximises colonies, then minimises drive, then prefers serving
 * the earliest booking where two equal plans differ.
 */

import { loadFits, type Problem, TIME_EPS, travel } from "./problem";

/** Largest candidate list of one crew's subset DP (2^12 · 12 states). */
export const EXACT_ROUTE_MAX = 12;
/** Largest number of plannable visits planDay accepts for method "exact" (3^14 ≈ 4.8 M per crew). */
export const EXACT_DAY_HARD_LIMIT = 14;

export interface RouteTable {
  /** Candidate visit indexes; bit i of a mask is members[i]. */
  members: number[];
  /** Least drive of a feasible route serving exactly mask (Infinity if none). */
  best: Float64Array;
  /** The order achieving best[mask] (visit indexes). */
  route(mask: number): number[];
}

/**
 * Least-drive feasible routes of one crew over every subset of `members` (at most
 * EXACT_ROUTE_MAX). `required` lists visits every valid subset must contain (the crew's
 * locked visits); subsets without them get Infinity.
 */
export function solveRouteTable(p: Problem, crew: number, members: readonly number[], required: readonly number[] = []): RouteTable {
  const m = members.length;
  if (m > EXACT_ROUTE_MAX + 2) throw new RangeError(`exact routing is limited to ${EXACT_ROUTE_MAX} stops, got ${m}`);
  const full = 1 << m;
  const startPoint = p.crewStart[crew];
  const endPoint = p.crewEnd[crew];
  const workStart = p.workStart[crew];
  const workEnd = p.workEnd[crew];

  // Lock order: a locked member may be added only once every locked member with an earlier
  // position is in, and none with a later one.
  let lockedMask = 0;
  let requiredMask = 0;
  const lockBefore = new Int32Array(m); // locked members that must already be in
  const lockAfter = new Int32Array(m); // locked members that must not be in yet
  for (let i = 0; i < m; i++) {
    const v = members[i];
    if (p.lockCrew[v] >= 0) lockedMask |= 1 << i;
    if (required.includes(v)) requiredMask |= 1 << i;
  }
  for (let i = 0; i < m; i++) {
    const v = members[i];
    if (p.lockCrew[v] < 0) continue;
    for (let j = 0; j < m; j++) {
      if (j === i || p.lockCrew[members[j]] < 0) continue;
      if (p.lockRank[members[j]] < p.lockRank[v]) lockBefore[i] |= 1 << j;
      if (p.lockRank[members[j]] > p.lockRank[v]) lockAfter[i] |= 1 << j;
    }
  }
  // Least travel from each member back to the end point over any chain of points here
  // (Floyd–Warshall, so it stays a valid bound even if the matrix breaks the triangle
  // inequality): a label that cannot get back by workEnd that way is dropped.
  const hops = [...members.map((v) => p.point[v]), endPoint];
  const k = hops.length;
  const shortest = new Float64Array(k * k);
  for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) shortest[a * k + b] = travel(p, hops[a], hops[b]);
  for (let via = 0; via < k; via++) {
    for (let a = 0; a < k; a++) {
      for (let b = 0; b < k; b++) {
        const through = shortest[a * k + via] + shortest[via * k + b];
        if (through < shortest[a * k + b]) shortest[a * k + b] = through;
      }
    }
  }
  const returnBound = Float64Array.from({ length: m }, (_, j) => shortest[j * k + m]);
  const allowedMember = new Uint8Array(m);
  for (let i = 0; i < m; i++) {
    const v = members[i];
    allowedMember[i] = p.lockCrew[v] < 0 || p.lockCrew[v] === crew ? 1 : 0;
  }
  // Sets within the crew's daily limits (built from each set without its lowest member).
  let withinLimits: Uint8Array | null = null;
  if (p.maxColonies[crew] !== Infinity || p.maxCentigrams[crew] !== Infinity) {
    const colonies = new Float64Array(full);
    const centigrams = new Float64Array(full);
    withinLimits = new Uint8Array(full);
    withinLimits[0] = 1;
    for (let mask = 1; mask < full; mask++) {
      const low = 31 - Math.clz32(mask & -mask);
      const rest = mask & (mask - 1);
      colonies[mask] = colonies[rest] + p.colonies[members[low]];
      centigrams[mask] = centigrams[rest] + p.centigrams[members[low]];
      withinLimits[mask] = loadFits(p, crew, colonies[mask], centigrams[mask]) ? 1 : 0;
    }
  }

  // Labels in growable flat arrays; each state (mask, last) has a linked list of live labels.
  let capacity = 1024;
  let labelCost = new Float64Array(capacity);
  let labelTime = new Float64Array(capacity);
  let labelPrev = new Int32Array(capacity);
  let labelLast = new Int32Array(capacity);
  let labelNext = new Int32Array(capacity);
  let count = 0;
  const head = new Int32Array(full * m).fill(-1);

  const grow = (): void => {
    capacity *= 2;
    const copy = <T extends Float64Array | Int32Array>(a: T, make: (n: number) => T): T => {
      const b = make(capacity);
      b.set(a);
      return b;
    };
    labelCost = copy(labelCost, (n) => new Float64Array(n));
    labelTime = copy(labelTime, (n) => new Float64Array(n));
    labelPrev = copy(labelPrev, (n) => new Int32Array(n));
    labelLast = copy(labelLast, (n) => new Int32Array(n));
    labelNext = copy(labelNext, (n) => new Int32Array(n));
  };

  const addLabel = (state: number, last: number, cost: number, time: number, prev: number): void => {
    // Dominated by an existing label? Otherwise unlink the labels the new one dominates.
    let before = -1;
    let l = head[state];
    while (l >= 0) {
      const c = labelCost[l];
      const t = labelTime[l];
      if (c <= cost + TIME_EPS && t <= time + TIME_EPS) return;
      const next = labelNext[l];
      if (cost <= c + TIME_EPS && time <= t + TIME_EPS) {
        if (before < 0) head[state] = next;
        else labelNext[before] = next;
      } else {
        before = l;
      }
      l = next;
    }
    if (count === capacity) grow();
    labelCost[count] = cost;
    labelTime[count] = time;
    labelPrev[count] = prev;
    labelLast[count] = last;
    labelNext[count] = head[state];
    head[state] = count;
    count++;
  };

  const tryExtend = (mask: number, fromPoint: number, cost: number, time: number, prev: number): void => {
    for (let j = 0; j < m; j++) {
      const bit = 1 << j;
      if (mask & bit || !allowedMember[j]) continue;
      if (withinLimits && !withinLimits[mask | bit]) continue;
      if (lockedMask & bit && ((mask & lockBefore[j]) !== lockBefore[j] || (mask & lockAfter[j]) !== 0)) continue;
      const v = members[j];
      const leg = travel(p, fromPoint, p.point[v]);
      let start = time + leg;
      if (start < p.earliest[v]) start = p.earliest[v];
      if (start > p.latestStart[v] + TIME_EPS) continue;
      if (start + p.service[v] + returnBound[j] > workEnd + TIME_EPS) continue;
      addLabel((mask | bit) * m + j, j, cost + leg, start + p.service[v], prev);
    }
  };

  tryExtend(0, startPoint, 0, workStart, -1);
  const best = new Float64Array(full).fill(Infinity);
  const bestLabel = new Int32Array(full).fill(-1);
  if (requiredMask === 0) best[0] = 0;
  for (let mask = 1; mask < full; mask++) {
    for (let j = 0; j < m; j++) {
      if (!(mask & (1 << j))) continue;
      const state = mask * m + j;
      const point = p.point[members[j]];
      const back = travel(p, point, endPoint);
      for (let l = head[state]; l >= 0; l = labelNext[l]) {
        const cost = labelCost[l];
        const time = labelTime[l];
        if ((mask & requiredMask) === requiredMask && time + back <= workEnd + TIME_EPS && cost + back < best[mask] - TIME_EPS) {
          best[mask] = cost + back;
          bestLabel[mask] = l;
        }
        tryExtend(mask, point, cost, time, l);
      }
    }
  }

  return {
    members: [...members],
    best,
    route(mask: number): number[] {
      if (mask === 0 || bestLabel[mask] < 0) return [];
      const order: number[] = [];
      for (let l = bestLabel[mask]; l >= 0; l = labelPrev[l]) order.push(members[labelLast[l]]);
      return order.reverse();
    },
  };
}

/** The least-drive feasible order of exactly these visits for the crew, or null if none. */
export function bestOrder(p: Problem, crew: number, visits: readonly number[]): { route: number[]; drive: number } | null {
  if (visits.length === 0) return { route: [], drive: 0 };
  const table = solveRouteTable(p, crew, visits);
  const full = (1 << visits.length) - 1;
  if (table.best[full] === Infinity) return null;
  return { route: table.route(full), drive: table.best[full] };
}

export function popcountColonies(p: Problem, candidates: readonly number[], mask: number): number {
  let total = 0;
  for (let i = 0; i < candidates.length; i++) if (mask & (1 << i)) total += p.colonies[candidates[i]];
  return total;
}

/**
 * Exact plan for some crews over `candidates` (visit indexes in booking order, at most
 * EXACT_DAY_HARD_LIMIT): `allowed(crew, v)` says whether the crew may serve v; required[k]
 * lists the visits crews[k] must serve (its kept locked visits). Returns one route per
 * listed crew: most colonies, then least drive, then the earliest booking served.
 */
export function solveCrewsExact(
  p: Problem,
  crews: readonly number[],
  candidates: readonly number[],
  allowed: (crew: number, v: number) => boolean,
  required: readonly (readonly number[])[],
): number[][] {
  const total = candidates.length;
  if (total > EXACT_DAY_HARD_LIMIT) throw new RangeError(`exact day planning is limited to ${EXACT_DAY_HARD_LIMIT} visits, got ${total}`);
  const full = 1 << total;
  const tables: { table: RouteTable; localOf: Int32Array; allowedMask: number }[] = [];
  const crewBest: Float64Array[] = [];
  crews.forEach((c, k) => {
    const members: number[] = [];
    const globalBits: number[] = [];
    let allowedMask = 0;
    for (let i = 0; i < total; i++) {
      if (!allowed(c, candidates[i])) continue;
      members.push(candidates[i]);
      globalBits.push(i);
      allowedMask |= 1 << i;
    }
    const table = solveRouteTable(p, c, members, required[k]);
    // Scatter local masks to global masks.
    const f = new Float64Array(full).fill(Infinity);
    const localOf = new Int32Array(full).fill(-1);
    for (let local = 0; local < 1 << members.length; local++) {
      let global = 0;
      for (let b = 0; b < members.length; b++) if (local & (1 << b)) global |= 1 << globalBits[b];
      f[global] = table.best[local];
      localOf[global] = local;
    }
    tables.push({ table, localOf, allowedMask });
    crewBest.push(f);
  });

  // g[U]: least drive serving exactly U with the crews so far; choice[k][U]: crew k's share.
  const choice: Int32Array[] = [];
  let g: Float64Array;
  if (crews.length === 0) {
    g = new Float64Array(full).fill(Infinity);
    g[0] = 0;
  } else {
    g = crewBest[0].slice();
    choice.push(Int32Array.from({ length: full }, (_, u) => u));
  }
  for (let k = 1; k < crews.length; k++) {
    const f = crewBest[k];
    const allowedMask = tables[k].allowedMask;
    const next = new Float64Array(full).fill(Infinity);
    const pick = new Int32Array(full).fill(-1);
    for (let u = 0; u < full; u++) {
      const within = u & allowedMask;
      // Every submask s of `within`, including 0.
      for (let s = within; ; s = (s - 1) & within) {
        const rest = g[u ^ s];
        if (rest !== Infinity) {
          const value = rest + f[s];
          if (value < next[u] - TIME_EPS) {
            next[u] = value;
            pick[u] = s;
          }
        }
        if (s === 0) break;
      }
    }
    g = next;
    choice.push(pick);
  }

  // Best served set: most colonies, least drive, then the earliest booking served.
  let bestU = -1;
  let bestColonies = -1;
  let bestDrive = Infinity;
  for (let u = 0; u < full; u++) {
    if (g[u] === Infinity) continue;
    const colonies = popcountColonies(p, candidates, u);
    const drive = g[u];
    let better = false;
    if (colonies > bestColonies) better = true;
    else if (colonies === bestColonies) {
      if (drive < bestDrive - TIME_EPS) better = true;
      else if (drive <= bestDrive + TIME_EPS && servesEarlierBooking(u, bestU)) better = true;
    }
    if (better) {
      bestU = u;
      bestColonies = colonies;
      bestDrive = drive;
    }
  }

  const routes: number[][] = crews.map(() => []);
  if (bestU < 0) return routes; // only if required visits cannot be served (callers prevent it)
  let u = bestU;
  for (let k = crews.length - 1; k >= 0; k--) {
    const share = choice[k][u];
    routes[k] = tables[k].table.route(tables[k].localOf[share]);
    u ^= share;
  }
  return routes;
}

/**
 * Tie-break between two served sets (bit masks over candidates listed in booking order):
 * true if `a` serves the earliest-booked candidate on which they differ.
 */
function servesEarlierBooking(a: number, b: number): boolean {
  if (b < 0) return true;
  const differ = a ^ b;
  if (differ === 0) return false;
  // Candidates are in ascending visit index = booking rank, so the lowest bit is the earliest.
  const lowest = differ & -differ;
  return (a & lowest) !== 0;
}
