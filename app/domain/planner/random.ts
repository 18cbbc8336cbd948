/**
 * Deterministic pseudo-random numbers for the route planner.
 *
 * The planner's searches are randomised but must be reproducible: the same input and the
 * same seed give the same tour or day plan on every machine. Math.random() is never used.
 * The generator is mulberry32 (32-bit state, period 2^32), which is ample for the few
 * hundred thousand draws a plan needs.
 */

export interface Random {
  /** Uniform float in [0, 1). */
  next(): number;
  /** Uniform integer in [0, n) for n ≥ 1. */
  int(n: number): number;
}

/** A seeded generator; any finite number is accepted as a seed (it is reduced to 32 bits). */
export function createRandom(seed: number): Random {
  if (!Number.isFinite(seed)) throw new RangeError(`seed must be a finite number, got ${seed}`);
  let state = Math.trunc(seed) >>> 0;
  const next = (): number => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return {
    next,
    int(n: number): number {
      return Math.floor(next() * n);
    },
  };
}

/** Fisher–Yates shuffle in place with the given generator. */
export function shuffleInPlace<T>(items: T[], random: Random): T[] {
  for (let i = items.length - 1; i > 0; i--) {
    const j = random.int(i + 1);
    const tmp = items[i];
    items[i] = items[j];
    items[j] = tmp;
  }
  return items;
}
