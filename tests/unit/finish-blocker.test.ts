import { describe, expect, it } from "vitest";
import { finishBlocker } from "~/components/crew/field-state";
import type { FieldColony, FieldStop, FieldTally } from "~/components/crew/field-types";

// When the phone lets the crew finish a stop: it asks for the supers to be confirmed off only
// when a colony was treated, as the server does (a colony with a super on is skipped).

const colony = (label: string) => ({ label, broodBoxes: 1, boxType: "deep", doseGrams: 1 }) as unknown as FieldColony;
const skipped = (label: string) => ({ colonyLabel: label, outcome: "skipped", skipReason: "supers_on", skipNote: null }) as unknown as FieldTally;
const treated = (label: string) => ({ colonyLabel: label, outcome: "treated", skipReason: null, skipNote: null }) as unknown as FieldTally;

function aStop(tallies: FieldTally[], supersConfirmed: boolean, status: FieldStop["status"] = "in_progress"): FieldStop {
  return {
    visitId: 1,
    position: 0,
    yardName: "Yard",
    customerName: "C",
    customerPhone: null,
    address: null,
    lat: 42.4,
    lng: -76.5,
    accessNotes: "",
    photoIds: [],
    arrive: "2026-12-05T14:00:00Z",
    roundNumber: 1,
    roundsPlanned: 1,
    colonies: [colony("H1"), colony("H2")],
    supersConfirmed,
    status,
    tallies: Object.fromEntries(tallies.map((t) => [t.colonyLabel, t])),
  };
}

describe("finishBlocker", () => {
  it("lets a stop where every colony was skipped finish without the supers confirmed", () => {
    expect(finishBlocker(aStop([skipped("H1"), skipped("H2")], false))).toBeNull();
  });

  it("asks for the supers once a colony was treated", () => {
    expect(finishBlocker(aStop([treated("H1"), skipped("H2")], false))).toBe("Confirm that the honey supers are off first.");
    expect(finishBlocker(aStop([treated("H1"), skipped("H2")], true))).toBeNull();
  });

  it("still asks for every colony, and nothing once finished", () => {
    expect(finishBlocker(aStop([skipped("H1")], false))).toMatch(/^Record every colony first: H2/);
    expect(finishBlocker(aStop([skipped("H1"), skipped("H2")], true, "done"))).toBe("This visit is finished.");
  });
});
