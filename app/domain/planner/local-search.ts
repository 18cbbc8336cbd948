/**
 * The day planner's working solution and its local-search moves.
 *
 * A solution is one route per crew plus the set of plannable visits left out. The
 * objective is lexicographic: most colonies served, then least total drive, then serving
 * the earliest booking where two plans differ. Every move keeps the plan feasible (windows,
 * working day, locks): a move's drive change is computed in O(1) first, and only an
 * improving move pays for a full timing check of the routes it changes.
 *
 * Moves: insert a left-out visit, directly or by moving one stop of the receiving route to
 * another crew (an ejection chain of length two, Glover 1996); exchange a left-out visit
 * for a served one; relocate a
 * visit to another crew; swap visits between crews; 2-opt (reverse a stretch) and Or-opt
 * (move a string of 1–3 stops, either way round) within a route.
 */

import { type Problem, TIME_EPS, travel } from "./problem";
import { RouteInfo, routeCost } from "./schedule";

/** Routes up to this length get full 2-opt and Or-opt scans; longer ones use nearest stops. */
const FULL_SCAN_MAX = 40;
/** Nearest stops considered per stop on long routes. */
const NEAREST = 12;

export interface Snapshot {
  routes: number[][];
  drive: number;
  colonies: number;
}

export class DaySolution {
  readonly routes: number[][];
  readonly drives: number[];
  /** Crew serving each visit, −1 if left out or not plannable. */
  readonly crewOf: Int32Array;
  private infos: (RouteInfo | null)[];
  colonies = 0;

  constructor(
    readonly p: Problem,
    /** allowed[c * n + v] = 1 if crew c may serve visit v. */
    readonly allowed: Uint8Array,
    /** Plannable visits in booking order. */
    readonly candidates: readonly number[],
  ) {
    this.routes = Array.from({ length: p.crewCount }, () => []);
    this.drives = new Array<number>(p.crewCount).fill(0);
    this.crewOf = new Int32Array(p.n).fill(-1);
    this.infos = new Array<RouteInfo | null>(p.crewCount).fill(null);
  }

  get drive(): number {
    let total = 0;
    for (const d of this.drives) total += d;
    return total;
  }

  isAllowed(crew: number, v: number): boolean {
    return this.allowed[crew * this.p.n + v] === 1;
  }

  info(crew: number): RouteInfo {
    let info = this.infos[crew];
    if (!info) {
      info = new RouteInfo(this.p, crew, this.routes[crew]);
      this.infos[crew] = info;
    }
    return info;
  }

  /** Replaces a crew's route (assumed feasible, with the given drive). */
  setRoute(crew: number, route: number[], drive: number): void {
    for (const v of this.routes[crew]) {
      // A visit may already sit in another crew's new route (swap, relocate).
      if (this.crewOf[v] === crew) this.crewOf[v] = -1;
      this.colonies -= this.p.colonies[v];
    }
    this.routes[crew] = route;
    for (const v of route) {
      this.crewOf[v] = crew;
      this.colonies += this.p.colonies[v];
    }
    this.drives[crew] = drive;
    this.infos[crew] = null;
  }

  unassigned(): number[] {
    return this.candidates.filter((v) => this.crewOf[v] < 0);
  }

  snapshot(): Snapshot {
    return { routes: this.routes.map((r) => [...r]), drive: this.drive, colonies: this.colonies };
  }

  restore(s: Snapshot): void {
    for (let c = 0; c < this.routes.length; c++) this.setRoute(c, [...s.routes[c]], routeCost(this.p, c, s.routes[c]));
  }

  /** Cheapest feasible insertion of unlocked v over the allowed crews: [crew, gap, delta] or null. */
  bestInsertion(v: number, blink?: () => boolean, bannedCrew = -1): [number, number, number] | null {
    let bestCrew = -1;
    let bestGap = -1;
    let bestDelta = Infinity;
    for (let c = 0; c < this.routes.length; c++) {
      if (c === bannedCrew || !this.isAllowed(c, v)) continue;
      const info = this.info(c);
      for (let gap = 0; gap <= this.routes[c].length; gap++) {
        if (blink && blink()) continue;
        const delta = info.insertionDelta(v, gap);
        if (delta < bestDelta - TIME_EPS) {
          bestDelta = delta;
          bestCrew = c;
          bestGap = gap;
        }
      }
    }
    return bestCrew < 0 ? null : [bestCrew, bestGap, bestDelta];
  }

  insertAt(crew: number, gap: number, v: number, delta: number): void {
    const route = [...this.routes[crew]];
    route.splice(gap, 0, v);
    this.setRoute(crew, route, this.drives[crew] + delta);
  }

  /** Removes unlocked visits from their routes; the shortened routes stay feasible. */
  remove(visits: readonly number[]): void {
    const byCrew = new Map<number, Set<number>>();
    for (const v of visits) {
      const c = this.crewOf[v];
      if (c < 0 || this.p.lockCrew[v] >= 0) continue;
      if (!byCrew.has(c)) byCrew.set(c, new Set());
      byCrew.get(c)!.add(v);
    }
    for (const [c, gone] of byCrew) {
      let route = this.routes[c].filter((v) => !gone.has(v));
      let cost = routeCost(this.p, c, route);
      // Dropping stops makes a route later only if the matrix breaks the triangle
      // inequality; then drop unlocked stops from the end until it is on time again.
      for (let i = route.length - 1; cost === Infinity && i >= 0; i--) {
        if (this.p.lockCrew[route[i]] >= 0) continue;
        route = [...route.slice(0, i), ...route.slice(i + 1)];
        cost = routeCost(this.p, c, route);
      }
      this.setRoute(c, route, cost);
    }
  }

  /**
   * Inserts left-out visits wherever they fit, most colonies first (then earliest booking),
   * each at its cheapest place. Returns true if anything was inserted.
   */
  insertLeftOut(): boolean {
    const p = this.p;
    const order = this.unassigned().sort((a, b) => p.colonies[b] - p.colonies[a] || a - b);
    let any = false;
    for (const v of order) {
      const best = this.bestInsertion(v);
      if (!best) continue;
      this.insertAt(best[0], best[1], v, best[2]);
      any = true;
    }
    return any;
  }

  /** Runs all moves to a local optimum. */
  localSearch(): void {
    for (let round = 0; round < 1000; round++) {
      let improved = this.insertLeftOut();
      improved = this.insertByEjection() || improved;
      improved = this.exchangeLeftOut() || improved;
      for (let c = 0; c < this.routes.length; c++) {
        while (this.twoOpt(c) || this.orOpt(c)) improved = true;
      }
      improved = this.relocate() || improved;
      improved = this.swap() || improved;
      improved = this.exchangeTails() || improved;
      if (!improved) return;
    }
  }

  /**
   * Ejection: a left-out visit u goes into crew c's route after one of c's unlocked stops w
   * moves to another crew. Serves more colonies, so always an improvement. First found.
   */
  insertByEjection(): boolean {
    const p = this.p;
    const crews = this.routes.length;
    if (crews < 2) return false;
    const left = this.unassigned().sort((a, b) => p.colonies[b] - p.colonies[a] || a - b);
    if (left.length === 0) return false;
    // Route of crew c without its i-th stop, built on first use.
    const without = new Map<string, { route: number[]; info: RouteInfo } | null>();
    const shortened = (c: number, i: number): { route: number[]; info: RouteInfo } | null => {
      const key = `${c}:${i}`;
      if (!without.has(key)) {
        const route = [...this.routes[c].slice(0, i), ...this.routes[c].slice(i + 1)];
        without.set(key, routeCost(p, c, route) === Infinity ? null : { route, info: new RouteInfo(p, c, route) });
      }
      return without.get(key)!;
    };
    for (const u of left) {
      for (let c = 0; c < crews; c++) {
        if (!this.isAllowed(c, u)) continue;
        const route = this.routes[c];
        for (let i = 0; i < route.length; i++) {
          const w = route[i];
          if (p.lockCrew[w] >= 0) continue;
          const base = shortened(c, i);
          if (!base) continue;
          let gap = -1;
          let delta = Infinity;
          for (let g = 0; g <= base.route.length; g++) {
            const d = base.info.insertionDelta(u, g);
            if (d < delta - TIME_EPS) {
              delta = d;
              gap = g;
            }
          }
          if (gap < 0) continue;
          // w elsewhere: cheapest place in another crew.
          let target: [number, number, number] | null = null;
          for (let c2 = 0; c2 < crews; c2++) {
            if (c2 === c || !this.isAllowed(c2, w)) continue;
            const info2 = this.info(c2);
            for (let g = 0; g <= this.routes[c2].length; g++) {
              const d = info2.insertionDelta(w, g);
              if (d < (target ? target[2] : Infinity) - TIME_EPS) target = [c2, g, d];
            }
          }
          if (!target) continue;
          const next = [...base.route];
          next.splice(gap, 0, u);
          this.setRoute(c, next, routeCost(p, c, base.route) + delta);
          this.insertAt(target[0], target[1], w, target[2]);
          return true;
        }
      }
    }
    return false;
  }

  /**
   * Exchange: a left-out visit u takes the place of a served unlocked visit w of the same
   * crew (anywhere in the route) if that serves more colonies, or as many with less drive,
   * or the same with an earlier booking. First improvement; true if one was made.
   */
  exchangeLeftOut(): boolean {
    const p = this.p;
    const left = this.unassigned();
    if (left.length === 0) return false;
    for (let c = 0; c < this.routes.length; c++) {
      const route = this.routes[c];
      for (let i = 0; i < route.length; i++) {
        const w = route[i];
        if (p.lockCrew[w] >= 0) continue;
        const without = [...route.slice(0, i), ...route.slice(i + 1)];
        const baseDrive = routeCost(p, c, without);
        if (baseDrive === Infinity) continue;
        const info = new RouteInfo(p, c, without);
        for (const u of left) {
          if (!this.isAllowed(c, u) || p.colonies[u] < p.colonies[w]) continue;
          let bestGap = -1;
          let bestDelta = Infinity;
          for (let gap = 0; gap <= without.length; gap++) {
            const delta = info.insertionDelta(u, gap);
            if (delta < bestDelta - TIME_EPS) {
              bestDelta = delta;
              bestGap = gap;
            }
          }
          if (bestGap < 0) continue;
          const newDrive = baseDrive + bestDelta;
          const gain = p.colonies[u] - p.colonies[w];
          const better =
            gain > 0 ||
            newDrive < this.drives[c] - TIME_EPS ||
            (newDrive <= this.drives[c] + TIME_EPS && u < w);
          if (!better) continue;
          without.splice(bestGap, 0, u);
          this.setRoute(c, without, newDrive);
          return true;
        }
      }
    }
    return false;
  }

  /** Move one unlocked visit to another crew's route; first improvement. */
  relocate(): boolean {
    const p = this.p;
    const crews = this.routes.length;
    if (crews < 2) return false;
    for (let c1 = 0; c1 < crews; c1++) {
      const route = this.routes[c1];
      const info1 = this.info(c1);
      for (let i = 0; i < route.length; i++) {
        const v = route[i];
        if (p.lockCrew[v] >= 0) continue;
        const removeDelta =
          route.length === 1
            ? -this.drives[c1]
            : travel(p, info1.pts[i], info1.pts[i + 2]) - travel(p, info1.pts[i], info1.pts[i + 1]) - travel(p, info1.pts[i + 1], info1.pts[i + 2]);
        for (let c2 = 0; c2 < crews; c2++) {
          if (c2 === c1 || !this.isAllowed(c2, v)) continue;
          const info2 = this.info(c2);
          for (let gap = 0; gap <= this.routes[c2].length; gap++) {
            const insertDelta = info2.insertionDelta(v, gap);
            if (removeDelta + insertDelta >= -TIME_EPS) continue;
            const shorter = [...route.slice(0, i), ...route.slice(i + 1)];
            const cost1 = routeCost(p, c1, shorter);
            if (cost1 === Infinity) continue;
            const longer = [...this.routes[c2]];
            longer.splice(gap, 0, v);
            this.setRoute(c1, shorter, cost1);
            this.setRoute(c2, longer, this.drives[c2] + insertDelta);
            return true;
          }
        }
      }
    }
    return false;
  }

  /** Swap two unlocked visits between crews (each takes the other's place); first improvement. */
  swap(): boolean {
    const p = this.p;
    const crews = this.routes.length;
    for (let c1 = 0; c1 < crews; c1++) {
      for (let c2 = c1 + 1; c2 < crews; c2++) {
        const r1 = this.routes[c1];
        const r2 = this.routes[c2];
        const a = this.info(c1).pts;
        const b = this.info(c2).pts;
        for (let i = 0; i < r1.length; i++) {
          const v = r1[i];
          if (p.lockCrew[v] >= 0 || !this.isAllowed(c2, v)) continue;
          const pv = p.point[v];
          for (let j = 0; j < r2.length; j++) {
            const w = r2[j];
            if (p.lockCrew[w] >= 0 || !this.isAllowed(c1, w)) continue;
            const pw = p.point[w];
            const delta =
              travel(p, a[i], pw) + travel(p, pw, a[i + 2]) - travel(p, a[i], pv) - travel(p, pv, a[i + 2]) +
              travel(p, b[j], pv) + travel(p, pv, b[j + 2]) - travel(p, b[j], pw) - travel(p, pw, b[j + 2]);
            if (delta >= -TIME_EPS) continue;
            const n1 = [...r1];
            n1[i] = w;
            const n2 = [...r2];
            n2[j] = v;
            const cost1 = routeCost(p, c1, n1);
            if (cost1 === Infinity) continue;
            const cost2 = routeCost(p, c2, n2);
            if (cost2 === Infinity) continue;
            this.setRoute(c1, n1, cost1);
            this.setRoute(c2, n2, cost2);
            return true;
          }
        }
      }
    }
    return false;
  }

  /**
   * 2-opt* (Potvin & Rousseau 1995): two crews exchange the ends of their routes, from any
   * split point on (splitting both at 0 swaps whole routes, e.g. towards a crew that works
   * later). First improvement.
   */
  exchangeTails(): boolean {
    const p = this.p;
    const crews = this.routes.length;
    for (let c1 = 0; c1 < crews; c1++) {
      for (let c2 = c1 + 1; c2 < crews; c2++) {
        const r1 = this.routes[c1];
        const r2 = this.routes[c2];
        if (r1.length === 0 && r2.length === 0) continue;
        const a = this.info(c1);
        const b = this.info(c2);
        // Earliest split from which each tail may move to the other crew.
        const movable1 = this.movableFrom(r1, c2);
        const movable2 = this.movableFrom(r2, c1);
        const current = this.drives[c1] + this.drives[c2];
        for (let i = movable1; i <= r1.length; i++) {
          for (let j = movable2; j <= r2.length; j++) {
            if (i === r1.length && j === r2.length) continue;
            const delta = this.joinedDrive(a, i, b, j) + this.joinedDrive(b, j, a, i) - current;
            if (delta >= -TIME_EPS) continue;
            const n1 = [...r1.slice(0, i), ...r2.slice(j)];
            const n2 = [...r2.slice(0, j), ...r1.slice(i)];
            const cost1 = routeCost(p, c1, n1);
            if (cost1 === Infinity) continue;
            const cost2 = routeCost(p, c2, n2);
            if (cost2 === Infinity) continue;
            this.setRoute(c1, n1, cost1);
            this.setRoute(c2, n2, cost2);
            return true;
          }
        }
      }
    }
    return false;
  }

  /** Smallest i such that route[i…] are all unlocked and allowed for crew `to`. */
  private movableFrom(route: readonly number[], to: number): number {
    let i = route.length;
    while (i > 0 && this.p.lockCrew[route[i - 1]] < 0 && this.isAllowed(to, route[i - 1])) i--;
    return i;
  }

  /** Drive of own.route[0…i) followed by other.route[j…], for own's crew (start and end). */
  private joinedDrive(own: RouteInfo, i: number, other: RouteInfo, j: number): number {
    const p = this.p;
    const otherLength = other.route.length;
    const tailEmpty = j >= otherLength;
    if (i === 0 && tailEmpty) return 0;
    const end = own.pts[own.route.length + 1];
    if (tailEmpty) return own.forward[i] + travel(p, own.pts[i], end);
    return (
      own.forward[i] +
      travel(p, own.pts[i], other.pts[j + 1]) +
      other.pathForward(j + 1, otherLength) +
      travel(p, other.pts[otherLength], end)
    );
  }

  /** Nearest plannable visits of each visit by travel time both ways, built on first use. */
  private nearest: Int32Array[] | null = null;

  private near(v: number): Int32Array {
    if (!this.nearest) {
      const p = this.p;
      const both = (a: number, b: number): number => travel(p, p.point[a], p.point[b]) + travel(p, p.point[b], p.point[a]);
      this.nearest = [];
      for (let a = 0; a < p.n; a++) {
        const others = this.candidates.filter((b) => b !== a).sort((x, y) => both(a, x) - both(a, y) || x - y);
        this.nearest.push(Int32Array.from(others.slice(0, NEAREST)));
      }
    }
    return this.nearest[v];
  }

  /** Position of each visit in a route (−1 elsewhere). */
  private positions(route: readonly number[]): Int32Array {
    const pos = new Int32Array(this.p.n).fill(-1);
    route.forEach((v, k) => (pos[v] = k));
    return pos;
  }

  /**
   * Reverse route[i…j]; first improvement. Drive of the reversed stretch via prefix sums.
   * Long routes only try reversals that create an edge to one of a stop's nearest stops.
   */
  twoOpt(crew: number): boolean {
    const p = this.p;
    const route = this.routes[crew];
    const length = route.length;
    if (length < 2) return false;
    const info = this.info(crew);
    const pts = info.pts;
    // Stops i…j sit at pts[i + 1 … j + 1].
    const tryMove = (i: number, j: number): boolean => {
      const before = travel(p, pts[i], pts[i + 1]) + info.pathForward(i + 1, j + 1) + travel(p, pts[j + 1], pts[j + 2]);
      const after = travel(p, pts[i], pts[j + 1]) + info.pathBackward(i + 1, j + 1) + travel(p, pts[i + 1], pts[j + 2]);
      if (after - before >= -TIME_EPS) return false;
      const candidate = [...route.slice(0, i), ...route.slice(i, j + 1).reverse(), ...route.slice(j + 1)];
      const cost = routeCost(p, crew, candidate);
      if (cost === Infinity || cost >= this.drives[crew] - TIME_EPS) return false;
      this.setRoute(crew, candidate, cost);
      return true;
    };
    if (length <= FULL_SCAN_MAX) {
      for (let i = 0; i < length - 1; i++) for (let j = i + 1; j < length; j++) if (tryMove(i, j)) return true;
      return false;
    }
    const pos = this.positions(route);
    for (let i = 0; i < length - 1; i++) {
      if (i === 0) {
        for (let j = 1; j < length; j++) if (tryMove(0, j)) return true;
        continue;
      }
      for (const w of this.near(route[i - 1])) if (pos[w] > i && tryMove(i, pos[w])) return true; // new edge route[i−1] → w
      for (const w of this.near(route[i])) if (pos[w] - 1 > i && tryMove(i, pos[w] - 1)) return true; // new edge route[i] → w
      if (tryMove(i, length - 1)) return true;
    }
    return false;
  }

  /**
   * Move a string of 1–3 stops elsewhere in the same route, either way round; first
   * improvement. Long routes only try places next to one of the string ends' nearest stops.
   */
  orOpt(crew: number): boolean {
    const p = this.p;
    const route = this.routes[crew];
    const length = route.length;
    if (length < 2) return false;
    const info = this.info(crew);
    const pts = info.pts;
    const pos = length > FULL_SCAN_MAX ? this.positions(route) : null;
    const gaps: number[] = [];
    for (let segLen = 1; segLen <= 3 && segLen < length; segLen++) {
      for (let i = 0; i + segLen <= length; i++) {
        // String = stops i…i+segLen−1 = pts[i+1 … i+segLen]; neighbours pts[i], pts[i+segLen+1].
        const first = pts[i + 1];
        const last = pts[i + segLen];
        const prev = pts[i];
        const next = pts[i + segLen + 1];
        const removeGain = travel(p, prev, first) + travel(p, last, next) - travel(p, prev, next);
        if (removeGain <= TIME_EPS) continue;
        const inner = info.pathForward(i + 1, i + segLen);
        const innerReversed = info.pathBackward(i + 1, i + segLen);
        // Places: between pts[g] and pts[g + 1] of the original, outside the string.
        gaps.length = 0;
        if (!pos) {
          for (let g = 0; g <= length; g++) gaps.push(g);
        } else {
          gaps.push(0, length);
          for (const end of [route[i], route[i + segLen - 1]]) {
            for (const w of this.near(end)) if (pos[w] >= 0) gaps.push(pos[w], pos[w] + 1);
          }
        }
        for (const g of gaps) {
          if (g >= i && g <= i + segLen) continue;
          const x = pts[g];
          const y = pts[g + 1];
          const base = travel(p, x, y);
          for (let reversed = 0; reversed < 2; reversed++) {
            const add = reversed
              ? travel(p, x, last) + innerReversed + travel(p, first, y) - base - inner
              : travel(p, x, first) + travel(p, last, y) - base;
            if (add - removeGain >= -TIME_EPS) continue;
            const segment = route.slice(i, i + segLen);
            if (reversed) segment.reverse();
            const rest = [...route.slice(0, i), ...route.slice(i + segLen)];
            const at = g < i ? g : g - segLen;
            rest.splice(at, 0, ...segment);
            const cost = routeCost(p, crew, rest);
            if (cost === Infinity || cost >= this.drives[crew] - TIME_EPS) continue;
            this.setRoute(crew, rest, cost);
            return true;
          }
        }
      }
    }
    return false;
  }
}

/**
 * Lexicographic comparison of two plans: negative if a is better. Most colonies, then least
 * drive, then the plan serving the earliest-booked visit on which they differ.
 */
export function compareSnapshots(p: Problem, a: Snapshot, b: Snapshot): number {
  if (a.colonies !== b.colonies) return b.colonies - a.colonies;
  if (a.drive < b.drive - TIME_EPS) return -1;
  if (a.drive > b.drive + TIME_EPS) return 1;
  const servedA = new Uint8Array(p.n);
  const servedB = new Uint8Array(p.n);
  for (const r of a.routes) for (const v of r) servedA[v] = 1;
  for (const r of b.routes) for (const v of r) servedB[v] = 1;
  for (let v = 0; v < p.n; v++) if (servedA[v] !== servedB[v]) return servedA[v] ? -1 : 1;
  return 0;
}
