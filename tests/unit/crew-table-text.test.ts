import { describe, expect, it } from "vitest";
import { dailyLimitLines, startEndLines } from "~/routes/dispatch/crew-table-text";

// The crews table stacks the two daily limits, and the start and end points, in one cell each.

describe("dailyLimitLines", () => {
  it("gives the colony limit, then the grams", () => {
    expect(dailyLimitLines({ maxColoniesPerDay: 30, maxDoseGramsPerDay: 612.5 })).toEqual(["30 colonies", "612.5 g"]);
  });

  it("says which limit is unset, so two empty lines are not read as one", () => {
    expect(dailyLimitLines({ maxColoniesPerDay: null, maxDoseGramsPerDay: null })).toEqual(["No colony limit", "No gram limit"]);
    expect(dailyLimitLines({ maxColoniesPerDay: null, maxDoseGramsPerDay: 40 })).toEqual(["No colony limit", "40 g"]);
  });

  it("counts one colony in the singular", () => {
    expect(dailyLimitLines({ maxColoniesPerDay: 1, maxDoseGramsPerDay: null })).toEqual(["1 colony", "No gram limit"]);
  });
});

describe("startEndLines", () => {
  it("shows the start alone when the crew ends where it starts", () => {
    expect(startEndLines({ startLabel: "Shop, 12 Kiln Lane", endLabel: "Shop, 12 Kiln Lane" })).toEqual(["Shop, 12 Kiln Lane", null]);
  });

  it("puts a different end point on its own line", () => {
    expect(startEndLines({ startLabel: "Shop", endLabel: "Yard depot" })).toEqual(["Shop", "→ Yard depot"]);
  });
});
