import { describe, expect, it } from "vitest";
import { coloniesAfterYardEdit, coloniesMatchYard, colonyShapes, crewFindingsNote, describeColonyShapes, editResetsColonyBoxes, type StoredColony } from "~/domain/colony-findings";

const deep = (broodBoxes: number) => ({ broodBoxes, boxType: "deep" as const });
const medium = (broodBoxes: number) => ({ broodBoxes, boxType: "medium" as const });
const stored = (label: string, boxes: number, active = true): StoredColony => ({ label, active, ...deep(boxes) });

describe("what the crew found, against the yard's figures", () => {
  it("groups colonies by shape, the biggest group first", () => {
    expect(colonyShapes([deep(2), deep(1), deep(2), medium(2), deep(2)])).toEqual([
      { broodBoxes: 2, boxType: "deep", count: 3 },
      { broodBoxes: 2, boxType: "medium", count: 1 },
      { broodBoxes: 1, boxType: "deep", count: 1 },
    ]);
    expect(colonyShapes([])).toEqual([]);
  });

  it("says the colonies in words", () => {
    expect(describeColonyShapes([deep(2), deep(2), deep(1)])).toBe("2 colonies of 2 deep brood boxes and 1 of 1 deep brood box");
    expect(describeColonyShapes([deep(1)])).toBe("1 colony of 1 deep brood box");
    expect(describeColonyShapes([deep(3), deep(3), medium(2), deep(1)])).toBe("2 colonies of 3 deep brood boxes, 1 of 2 medium brood boxes and 1 of 1 deep brood box");
    expect(describeColonyShapes([])).toBe("");
  });

  it("has nothing to say when every colony matches the yard, and names how many differ when not", () => {
    const yard = { broodBoxesPerColony: 2, boxType: "deep" as const };
    expect(coloniesMatchYard([deep(2), deep(2)], yard)).toBe(true);
    expect(crewFindingsNote([deep(2), deep(2)], yard)).toBeNull();
    expect(crewFindingsNote([], yard)).toBeNull();
    expect(crewFindingsNote([deep(2), deep(1), medium(2)], yard)).toBe(
      "The crew found 1 colony of 2 deep brood boxes, 1 of 2 medium brood boxes and 1 of 1 deep brood box (2 colonies differ from the yard's 2 deep brood boxes). Doses are planned as the crew found them.",
    );
    expect(crewFindingsNote([deep(2), deep(3)], yard)).toContain("(1 colony differs from the yard's 2 deep brood boxes)");
  });

  it("resets the colonies' boxes only when an edit changes the yard's boxes", () => {
    expect(editResetsColonyBoxes({ broodBoxesPerColony: 2, boxType: "deep" }, { broodBoxesPerColony: 2, boxType: "deep" })).toBe(false);
    expect(editResetsColonyBoxes({ broodBoxesPerColony: 2, boxType: "deep" }, { broodBoxesPerColony: 3, boxType: "deep" })).toBe(true);
    expect(editResetsColonyBoxes({ broodBoxesPerColony: 2, boxType: "deep" }, { broodBoxesPerColony: 2, boxType: "medium" })).toBe(true);
  });

  it("works out the colonies after an edit: kept as found, added and returning ones at the yard's figures, the rest retired", () => {
    const rows = [stored("H1", 1), stored("H2", 3), stored("H3", 1, false), stored("H4", 1)];
    const yard = { broodBoxesPerColony: 2, boxType: "deep" as const };
    // Three colonies, boxes unchanged: H1 and H2 as found, H3 comes back at the yard's 2 boxes; H4 retires.
    expect(coloniesAfterYardEdit(rows, { ...yard, colonyCount: 3 }, false)).toEqual([deep(1), deep(3), deep(2)]);
    // Five: H4 kept as found, H5 new at 2.
    expect(coloniesAfterYardEdit(rows, { ...yard, colonyCount: 5 }, false)).toEqual([deep(1), deep(3), deep(2), deep(1), deep(2)]);
    // New boxes: every colony takes them.
    expect(coloniesAfterYardEdit(rows, { broodBoxesPerColony: 2, boxType: "medium", colonyCount: 2 }, true)).toEqual([medium(2), medium(2)]);
    expect(coloniesAfterYardEdit(rows, { ...yard, colonyCount: 0 }, false)).toEqual([]);
  });
});
