import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { visitsBeyondCapacity, type VisitTakingRoom } from "~/domain/capacity";
import { gramsToCentigrams } from "~/domain/dose";

// A day that lost room keeps a visit only when both its colonies and its grams still fit;
// without a gram bound it decides exactly as on colonies alone.

describe("visits beyond a day's new capacity, in grams", () => {
  it("moves a visit that fits in colonies but not in grams, and keeps a later one that fits both", () => {
    const visits: VisitTakingRoom[] = [
      { id: 1, colonies: 3, grams: 6, movable: true },
      { id: 2, colonies: 4, grams: 8, movable: true },
      { id: 3, colonies: 2, grams: 2, movable: true },
      { id: 4, colonies: 5, grams: 7, movable: true },
    ];
    // 14 colonies fit 20; in grams 6 + 8 = 14 > 10, so visit 2 moves; 6 + 2 = 8 stays; 8 + 7 > 10 moves.
    expect(visitsBeyondCapacity(20, visits, 10)).toEqual({ stay: [1, 3], move: [2, 4] });
    // The same visits without a gram bound all stay.
    expect(visitsBeyondCapacity(20, visits, null)).toEqual({ stay: [1, 2, 3, 4], move: [] });
    expect(visitsBeyondCapacity(20, visits)).toEqual({ stay: [1, 2, 3, 4], move: [] });
  });

  it("keeps visits that cannot move whatever their grams, and counts their grams first", () => {
    const visits: VisitTakingRoom[] = [
      { id: 1, colonies: 2, grams: 3, movable: true },
      { id: 2, colonies: 4, grams: 9, movable: false },
    ];
    // 9 g fixed leaves 1 g of 10: the 3 g visit moves though its colonies fit.
    expect(visitsBeyondCapacity(50, visits, 10)).toEqual({ stay: [2], move: [1] });
    // Fixed grams above the bound still stay (the caller refuses such a change).
    expect(visitsBeyondCapacity(50, visits, 5)).toEqual({ stay: [2], move: [1] });
  });

  it("compares grams in whole centigrams: 0.1 g + 0.2 g fits 0.3 g", () => {
    const visits: VisitTakingRoom[] = [
      { id: 1, colonies: 1, grams: 0.1, movable: true },
      { id: 2, colonies: 1, grams: 0.2, movable: true },
      { id: 3, colonies: 1, grams: 0.01, movable: true },
    ];
    // In floating point 0.1 + 0.2 > 0.3; in centigrams 10 + 20 = 30 fits exactly.
    expect(visitsBeyondCapacity(10, visits, 0.3)).toEqual({ stay: [1, 2], move: [3] });
  });

  it("moves every movable visit with grams from a day with no grams left, and keeps visits without grams", () => {
    const visits: VisitTakingRoom[] = [
      { id: 1, colonies: 2, grams: 2, movable: true },
      { id: 2, colonies: 2, movable: true }, // no grams given: counts as 0 g
    ];
    expect(visitsBeyondCapacity(10, visits, 0)).toEqual({ stay: [2], move: [1] });
  });

  const visitArb = fc.record({
    colonies: fc.integer({ min: 1, max: 24 }),
    centigrams: fc.integer({ min: 0, max: 5000 }),
    movable: fc.boolean(),
  });

  it("without a gram bound decides exactly as on colonies alone", () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 60 }), fc.array(visitArb, { maxLength: 12 }), (capacity, raw) => {
        const withGrams = raw.map((v, i) => ({ id: i + 1, colonies: v.colonies, grams: v.centigrams / 100, movable: v.movable }));
        const without = raw.map((v, i) => ({ id: i + 1, colonies: v.colonies, movable: v.movable }));
        const coloniesOnly = visitsBeyondCapacity(capacity, without);
        expect(visitsBeyondCapacity(capacity, withGrams, null)).toEqual(coloniesOnly);
        expect(visitsBeyondCapacity(capacity, withGrams)).toEqual(coloniesOnly);
      }),
    );
  });

  it("never leaves more movable grams or colonies than fit, and moves only what fits in neither", () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 60 }),
        fc.integer({ min: 0, max: 6000 }),
        fc.array(visitArb, { maxLength: 12 }),
        (capacity, capacityCentigrams, raw) => {
          const visits = raw.map((v, i) => ({ id: i + 1, colonies: v.colonies, grams: v.centigrams / 100, movable: v.movable }));
          const gramsCapacity = capacityCentigrams / 100;
          const { stay, move } = visitsBeyondCapacity(capacity, visits, gramsCapacity);
          expect([...stay, ...move].sort((a, b) => a - b)).toEqual(visits.map((v) => v.id));
          const cg = (v: (typeof visits)[number]) => gramsToCentigrams(v.grams);
          const fixed = visits.filter((v) => !v.movable);
          const kept = visits.filter((v) => stay.includes(v.id));
          const keptColonies = kept.reduce((s, v) => s + v.colonies, 0);
          const keptCg = kept.reduce((s, v) => s + cg(v), 0);
          expect(keptColonies).toBeLessThanOrEqual(Math.max(capacity, fixed.reduce((s, v) => s + v.colonies, 0)));
          expect(keptCg).toBeLessThanOrEqual(Math.max(capacityCentigrams, fixed.reduce((s, v) => s + cg(v), 0)));
          for (const id of move) {
            const v = visits.find((x) => x.id === id)!;
            expect(v.movable).toBe(true);
            // It moved because, with what stays, its colonies or its grams would not fit.
            expect(keptColonies + v.colonies > capacity || keptCg + cg(v) > capacityCentigrams).toBe(true);
          }
        },
      ),
    );
  });
});
