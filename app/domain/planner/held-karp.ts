/**
 * Held–Karp dynamic programming: the exact symmetric-or-asymmetric TSP for small n.
 *
 * Held & Karp 1962: cost(S, j) = the shortest path that starts at node 0, visits exactly the
 * set S and ends at j ∈ S; the tour closes back to node 0. Time O(2^(n−1)·(n−1)²), memory
 * O(2^(n−1)·(n−1)). At n = 16 that is about 7 million steps (a few milliseconds).
 */

/** Refuse anything bigger: 2^(n−1)·(n−1) doubles would pass ~40 MB at n = 19. */
export const HELD_KARP_MAX_NODES = 18;

/** Optimal tour starting at node 0 over a flat n×n distance array; returns the node order. */
export function heldKarpOrder(n: number, dist: Float64Array): number[] {
  if (n > HELD_KARP_MAX_NODES) throw new RangeError(`Held–Karp is limited to ${HELD_KARP_MAX_NODES} nodes, got ${n}`);
  if (n <= 3) return Array.from({ length: n }, (_, i) => i);
  const m = n - 1; // nodes 1…n−1 are bits 0…m−1
  const full = (1 << m) - 1;
  const cost = new Float64Array((full + 1) * m).fill(Infinity);
  const parent = new Int8Array((full + 1) * m).fill(-1);
  for (let j = 0; j < m; j++) cost[(1 << j) * m + j] = dist[j + 1];
  for (let mask = 1; mask <= full; mask++) {
    for (let j = 0; j < m; j++) {
      if (!(mask & (1 << j))) continue;
      const here = cost[mask * m + j];
      if (here === Infinity) continue;
      const row = (j + 1) * n + 1;
      for (let k = 0; k < m; k++) {
        if (mask & (1 << k)) continue;
        const nextMask = mask | (1 << k);
        const value = here + dist[row + k];
        const at = nextMask * m + k;
        if (value < cost[at]) {
          cost[at] = value;
          parent[at] = j;
        }
      }
    }
  }
  let bestEnd = 0;
  let bestCost = Infinity;
  for (let j = 0; j < m; j++) {
    const value = cost[full * m + j] + dist[(j + 1) * n];
    if (value < bestCost) {
      bestCost = value;
      bestEnd = j;
    }
  }
  const reversed: number[] = [];
  let mask = full;
  let j = bestEnd;
  while (j >= 0) {
    reversed.push(j + 1);
    const previous = parent[mask * m + j];
    mask &= ~(1 << j);
    j = previous;
  }
  reversed.push(0);
  return reversed.reverse();
}
