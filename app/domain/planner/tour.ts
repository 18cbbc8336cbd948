/**
 * Symmetric travelling-salesman tours on a distance matrix.
 *
 * - n ≤ exactMaxNodes (default 16): Held–Karp, provably optimal.
 * - larger: nearest-neighbour construction, then 2-opt and Or-opt local search driven by
 *   neighbour lists and don't-look bits (Bentley 1992), inside an iterated local search:
 *   a random "double-bridge" kick (Martin, Otto & Felten 1991; Lourenço, Martin & Stützle
 *   2003), local search again, keep the result if it is no longer. The kicks come from a
 *   seeded generator and the budget is a fixed number of kicks, never a clock, so the same
 *   matrix and seed always give the same tour.
 *
 * Tours start at node 0 (the depot) and are returned as a permutation of 0…n−1; the
 * closing edge back to node 0 is implied. Lengths are recomputed from the matrix.
 */

import { heldKarpOrder, HELD_KARP_MAX_NODES } from "./held-karp";
import { createRandom, type Random } from "./random";

export type DistanceMatrix = readonly (readonly number[])[];

export interface TourOptions {
  /** Seed of the kick generator (default 1). */
  seed?: number;
  /** Largest n solved exactly with Held–Karp (default 16, at most 18). */
  exactMaxNodes?: number;
  /** Number of double-bridge kicks (default 3000 + 40·n, at most 20 000). */
  iterations?: number;
  /** Length of each node's candidate list (default 10). */
  neighbours?: number;
}

export interface TourResult {
  /** Node order starting at 0; a permutation of 0…n−1. */
  tour: number[];
  /** Closed tour length from the matrix. */
  length: number;
  method: "trivial" | "exact" | "heuristic" | "nearest-neighbour";
}

export const DEFAULT_EXACT_MAX_NODES = 16;
const EPS = 1e-9;

/** Length of the closed tour (…, last → first) over the matrix. */
export function tourLength(dist: DistanceMatrix, tour: readonly number[]): number {
  let total = 0;
  for (let i = 0; i < tour.length; i++) total += dist[tour[i]][tour[(i + 1) % tour.length]];
  return total;
}

/** True if tour is a permutation of 0…n−1. */
export function isPermutation(tour: readonly number[], n: number): boolean {
  if (tour.length !== n) return false;
  const seen = new Uint8Array(n);
  for (const node of tour) {
    if (!Number.isInteger(node) || node < 0 || node >= n || seen[node]) return false;
    seen[node] = 1;
  }
  return true;
}

/** The nearest-neighbour tour from `start` (ties go to the lower index): the baseline. */
export function nearestNeighbourTour(dist: DistanceMatrix, start = 0): TourResult {
  const n = checkMatrix(dist);
  if (n === 0) return { tour: [], length: 0, method: "nearest-neighbour" };
  const flat = flatten(dist, n);
  const order = nearestNeighbourOrder(n, flat, start);
  return { tour: order, length: tourLength(dist, order), method: "nearest-neighbour" };
}

/** A short tour of the symmetric matrix: exact for small n, iterated local search above. */
export function solveTour(dist: DistanceMatrix, options: TourOptions = {}): TourResult {
  const n = checkMatrix(dist);
  const exactMax = Math.min(options.exactMaxNodes ?? DEFAULT_EXACT_MAX_NODES, HELD_KARP_MAX_NODES);
  if (n <= 3) {
    const tour = Array.from({ length: n }, (_, i) => i);
    return { tour, length: tourLength(dist, tour), method: "trivial" };
  }
  const flat = flatten(dist, n);
  if (n <= exactMax) {
    const tour = heldKarpOrder(n, flat);
    return { tour, length: tourLength(dist, tour), method: "exact" };
  }
  const random = createRandom(options.seed ?? 1);
  const iterations = options.iterations ?? Math.min(3000 + 40 * n, 20_000);
  const k = Math.max(1, Math.min(options.neighbours ?? 10, n - 1));
  const search = new TourSearch(n, flat, k, random);
  search.load(nearestNeighbourOrder(n, flat, 0));
  const order = search.iteratedLocalSearch(iterations);
  return { tour: order, length: tourLength(dist, order), method: "heuristic" };
}

function checkMatrix(dist: DistanceMatrix): number {
  const n = dist.length;
  for (const row of dist) {
    if (row.length !== n) throw new RangeError("distance matrix must be square");
    for (const value of row) if (!Number.isFinite(value)) throw new RangeError("distances must be finite");
  }
  return n;
}

function flatten(dist: DistanceMatrix, n: number): Float64Array {
  const flat = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) flat[i * n + j] = dist[i][j];
  return flat;
}

function nearestNeighbourOrder(n: number, dist: Float64Array, start: number): number[] {
  const used = new Uint8Array(n);
  const order = [start];
  used[start] = 1;
  let current = start;
  for (let step = 1; step < n; step++) {
    let best = -1;
    let bestD = Infinity;
    for (let j = 0; j < n; j++) {
      if (used[j]) continue;
      const d = dist[current * n + j];
      if (d < bestD) {
        bestD = d;
        best = j;
      }
    }
    used[best] = 1;
    order.push(best);
    current = best;
  }
  return order;
}

/** Array tour with position index, 2-opt + Or-opt local search and double-bridge ILS. */
class TourSearch {
  private readonly tour: Int32Array;
  private readonly pos: Int32Array;
  private readonly neighbours: Int32Array;
  private readonly queue: Int32Array;
  private readonly queued: Uint8Array;
  private readonly scratch: Int32Array;
  private queueHead = 0;
  private queueSize = 0;

  constructor(
    private readonly n: number,
    private readonly d: Float64Array,
    private readonly k: number,
    private readonly random: Random,
  ) {
    this.tour = new Int32Array(n);
    this.pos = new Int32Array(n);
    this.queue = new Int32Array(n);
    this.queued = new Uint8Array(n);
    this.scratch = new Int32Array(n);
    this.neighbours = new Int32Array(n * k);
    const others = Array.from({ length: n }, (_, i) => i);
    for (let a = 0; a < n; a++) {
      const sorted = others.filter((b) => b !== a).sort((x, y) => d[a * n + x] - d[a * n + y] || x - y);
      for (let i = 0; i < k; i++) this.neighbours[a * k + i] = sorted[i];
    }
  }

  load(order: ArrayLike<number>): void {
    for (let i = 0; i < this.n; i++) {
      this.tour[i] = order[i];
      this.pos[order[i]] = i;
    }
  }

  iteratedLocalSearch(iterations: number): number[] {
    const n = this.n;
    for (let c = 0; c < n; c++) this.push(c);
    let length = this.length() + this.localSearch();
    let bestLength = length;
    const best = Int32Array.from(this.tour);
    const saved = new Int32Array(n);
    for (let it = 0; it < iterations; it++) {
      saved.set(this.tour);
      const delta = this.doubleBridge() + this.localSearch();
      if (delta < EPS) {
        length += delta;
        if (length < bestLength - EPS) {
          bestLength = length;
          best.set(this.tour);
        }
      } else {
        this.load(saved);
      }
    }
    // Rotate so the depot (node 0) comes first.
    const start = best.indexOf(0);
    const order: number[] = [];
    for (let i = 0; i < n; i++) order.push(best[(start + i) % n]);
    return order;
  }

  private length(): number {
    let total = 0;
    for (let i = 0; i < this.n; i++) total += this.dist(this.tour[i], this.tour[(i + 1) % this.n]);
    return total;
  }

  private dist(a: number, b: number): number {
    return this.d[a * this.n + b];
  }

  private next(c: number): number {
    const p = this.pos[c] + 1;
    return this.tour[p === this.n ? 0 : p];
  }

  private prev(c: number): number {
    const p = this.pos[c];
    return this.tour[p === 0 ? this.n - 1 : p - 1];
  }

  private push(c: number): void {
    if (this.queued[c]) return;
    this.queued[c] = 1;
    this.queue[(this.queueHead + this.queueSize) % this.n] = c;
    this.queueSize++;
  }

  private pop(): number {
    const c = this.queue[this.queueHead];
    this.queueHead = (this.queueHead + 1) % this.n;
    this.queueSize--;
    this.queued[c] = 0;
    return c;
  }

  /** Runs 2-opt and Or-opt from the queued cities until none improves; returns the change. */
  private localSearch(): number {
    let total = 0;
    while (this.queueSize > 0) {
      const a = this.pop();
      for (;;) {
        const gain = this.twoOpt(a) || this.orOpt(a);
        if (gain === 0) break;
        total += gain;
      }
    }
    return total;
  }

  /** Reverses the tour path from city a forward to city b (or its complement, if shorter). */
  private reversePath(a: number, b: number): void {
    const n = this.n;
    let i = this.pos[a];
    let j = this.pos[b];
    let len = ((j - i + n) % n) + 1;
    if (len * 2 > n) {
      const ni = (j + 1) % n;
      j = (i - 1 + n) % n;
      i = ni;
      len = n - len;
    }
    for (let s = 0; s < len >> 1; s++) {
      const x = this.tour[i];
      const y = this.tour[j];
      this.tour[i] = y;
      this.pos[y] = i;
      this.tour[j] = x;
      this.pos[x] = j;
      i = i + 1 === n ? 0 : i + 1;
      j = j === 0 ? n - 1 : j - 1;
    }
  }

  /** First improving 2-opt move with an edge at a (both tour directions); returns its delta or 0. */
  private twoOpt(a: number): number {
    const k = this.k;
    for (let dir = 0; dir < 2; dir++) {
      const b = dir === 0 ? this.next(a) : this.prev(a);
      const dab = this.dist(a, b);
      for (let i = 0; i < k; i++) {
        const c = this.neighbours[a * k + i];
        const dac = this.dist(a, c);
        if (dac >= dab - EPS) break;
        const dd = dir === 0 ? this.next(c) : this.prev(c);
        if (c === b || dd === a) continue;
        const delta = dac + this.dist(b, dd) - dab - this.dist(c, dd);
        if (delta < -EPS) {
          if (dir === 0) this.reversePath(b, c);
          else this.reversePath(a, dd);
          this.push(a);
          this.push(b);
          this.push(c);
          this.push(dd);
          return delta;
        }
      }
    }
    return 0;
  }

  /**
   * First improving Or-opt move of a segment of 1–3 cities that starts or ends at a, to a
   * place next to one of the segment ends' neighbours, either way round; delta or 0.
   */
  private orOpt(a: number): number {
    const n = this.n;
    const k = this.k;
    for (let segLen = 1; segLen <= 3 && segLen + 3 <= n; segLen++) {
      for (let side = 0; side < 2; side++) {
        // Segment s1 … sk in tour order.
        let s1 = a;
        let sk = a;
        for (let s = 1; s < segLen; s++) {
          if (side === 0) sk = this.next(sk);
          else s1 = this.prev(s1);
        }
        if (side === 1 && segLen === 1) continue;
        const p = this.prev(s1);
        const nx = this.next(sk);
        const removeGain = this.dist(p, s1) + this.dist(sk, nx) - this.dist(p, nx);
        if (removeGain <= EPS) continue;
        const startPos = this.pos[s1];
        for (let end = 0; end < 2; end++) {
          const e = end === 0 ? s1 : sk;
          const other = end === 0 ? sk : s1;
          for (let i = 0; i < k; i++) {
            const c = this.neighbours[e * k + i];
            const dec = this.dist(e, c);
            if (dec >= removeGain - EPS) break;
            if ((this.pos[c] - startPos + n) % n < segLen) continue;
            // Either x = c, y = next(c), or x = prev(c), y = c; e sits next to c.
            for (let place = 0; place < 2; place++) {
              const x = place === 0 ? c : this.prev(c);
              const y = place === 0 ? this.next(c) : c;
              if ((this.pos[x] - startPos + n) % n < segLen || (this.pos[y] - startPos + n) % n < segLen) continue;
              const far = place === 0 ? y : x;
              const delta = dec + this.dist(other, far) - this.dist(x, y) - removeGain;
              if (delta < -EPS) {
                // Forward orientation (s1 … sk between x and y) when s1 follows x.
                const forward = (place === 0) === (end === 0);
                this.moveSegment(s1, sk, segLen, x, forward);
                this.push(p);
                this.push(nx);
                this.push(s1);
                this.push(sk);
                this.push(x);
                this.push(y);
                return delta;
              }
            }
          }
        }
      }
    }
    return 0;
  }

  /** Moves s1…sk (tour order) between x and next(x); forward keeps s1 next to x. */
  private moveSegment(s1: number, sk: number, segLen: number, x: number, forward: boolean): void {
    const n = this.n;
    const out = this.scratch;
    const startPos = this.pos[s1];
    const p = this.prev(s1);
    let w = 0;
    let c = this.next(sk);
    for (;;) {
      out[w++] = c;
      if (c === x) {
        for (let s = 0; s < segLen; s++) {
          out[w++] = this.tour[(startPos + (forward ? s : segLen - 1 - s)) % n];
        }
      }
      if (c === p) break;
      c = this.next(c);
    }
    for (let i = 0; i < n; i++) {
      this.tour[i] = out[i];
      this.pos[out[i]] = i;
    }
  }

  /**
   * Double-bridge kick: after a random city t, swaps the next two segments (lengths 1…L),
   * A B C D → A C B D, which 2-opt and Or-opt cannot undo in one move. Returns the delta.
   */
  private doubleBridge(): number {
    const n = this.n;
    const maxSeg = Math.max(1, Math.min(50, Math.floor((n - 2) / 3)));
    const len1 = 1 + this.random.int(maxSeg);
    const len2 = 1 + this.random.int(maxSeg);
    const i = this.random.int(n);
    const tour = this.tour;
    const a = tour[i];
    const b1 = tour[(i + 1) % n];
    const b2 = tour[(i + len1) % n];
    const c1 = tour[(i + len1 + 1) % n];
    const c2 = tour[(i + len1 + len2) % n];
    const d = tour[(i + len1 + len2 + 1) % n];
    const delta =
      this.dist(a, c1) + this.dist(c2, b1) + this.dist(b2, d) - this.dist(a, b1) - this.dist(b2, c1) - this.dist(c2, d);
    const out = this.scratch;
    let w = 0;
    for (let s = 0; s < len2; s++) out[w++] = tour[(i + len1 + 1 + s) % n];
    for (let s = 0; s < len1; s++) out[w++] = tour[(i + 1 + s) % n];
    for (let s = 0; s < w; s++) {
      const c = out[s];
      const p = (i + 1 + s) % n;
      this.tour[p] = c;
      this.pos[c] = p;
    }
    this.push(a);
    this.push(b1);
    this.push(b2);
    this.push(c1);
    this.push(c2);
    this.push(d);
    return delta;
  }
}
