import { BOX_TYPE_LABELS, doseGramsForColonyOfType } from "~/domain/box-types";
import type { FieldChange, FieldColony, FieldRun, FieldSettings, FieldStop, FieldTally } from "./field-types";

/** The run as the crew sees it: the server's snapshot with the phone's own changes on top. */
export function applyChanges(run: FieldRun, changes: readonly FieldChange[]): FieldRun {
  return changes.filter((c) => c.runId === run.runId).reduce(applyChange, run);
}

function updateStop(run: FieldRun, visitId: number, update: (stop: FieldStop) => FieldStop): FieldRun {
  return { ...run, stops: run.stops.map((s) => (s.visitId === visitId ? update(s) : s)) };
}

/**
 * A colony as the crew corrected it at the hive: its boxes and box type, and the dose from
 * them (the server doses the same way). Without the rate of a box type the dose is left as it
 * was; the server's snapshot brings the right one.
 */
export function correctedColony(colony: FieldColony, tally: FieldTally, settings: FieldSettings): FieldColony {
  const broodBoxes = tally.broodBoxes ?? colony.broodBoxes;
  const boxType = tally.boxType ?? colony.boxType ?? "deep";
  if (broodBoxes === colony.broodBoxes && boxType === (colony.boxType ?? "deep")) return colony;
  const rates = {
    doseGramsPerBroodBox: settings.doseGramsPerBroodBox,
    doseGramsPerMediumBox: settings.doseGramsPerMediumBox ?? Number.NaN,
    doseGramsPerNucBox: settings.doseGramsPerNucBox ?? Number.NaN,
  };
  const grams = doseGramsForColonyOfTypeOrNull(broodBoxes, boxType, rates);
  return {
    ...colony,
    broodBoxes,
    boxType,
    boxTypeLabel: BOX_TYPE_LABELS[boxType],
    doseGrams: grams ?? colony.doseGrams,
    // The sentence was for the record's boxes; the dose line above says the corrected one.
    doseAssumption: undefined,
  };
}

function doseGramsForColonyOfTypeOrNull(...args: Parameters<typeof doseGramsForColonyOfType>): number | null {
  try {
    const grams = doseGramsForColonyOfType(...args);
    return Number.isFinite(grams) ? grams : null;
  } catch {
    return null;
  }
}

export function applyChange(run: FieldRun, change: FieldChange): FieldRun {
  switch (change.kind) {
    case "safety":
      return { ...run, safetyChecked: true };
    case "supers":
      return updateStop(run, change.payload.visitId, (s) => ({ ...s, supersConfirmed: true, status: s.status === "done" ? s.status : "in_progress" }));
    case "tally": {
      const { visitId, recordedAt: _recordedAt, ...tally } = change.payload;
      return updateStop(run, visitId, (s) =>
        s.status === "done"
          ? s
          : {
              ...s,
              colonies: s.colonies.map((c) => (c.label === tally.colonyLabel ? correctedColony(c, tally as FieldTally, run.settings) : c)),
              tallies: { ...s.tallies, [tally.colonyLabel]: tally as FieldTally },
            },
      );
    }
    case "air_temp":
      return updateStop(run, change.payload.visitId, (s) => (s.status === "done" ? s : { ...s, airTempC: change.payload.airTempC }));
    case "finish":
      return updateStop(run, change.payload.visitId, (s) => ({ ...s, status: "done" }));
  }
}

export type StopTotals = { colonies: number; tallied: number; treated: number; skipped: number; grams: number };

export function stopTotals(stop: FieldStop): StopTotals {
  let treated = 0;
  let skipped = 0;
  let centigrams = 0;
  for (const colony of stop.colonies) {
    const tally = stop.tallies[colony.label];
    if (!tally) continue;
    if (tally.outcome === "treated") {
      treated++;
      centigrams += Math.round(colony.doseGrams * 100);
    } else skipped++;
  }
  return { colonies: stop.colonies.length, tallied: treated + skipped, treated, skipped, grams: centigrams / 100 };
}

/** Why the stop cannot be finished yet, or null when it can. */
export function finishBlocker(stop: FieldStop): string | null {
  if (stop.status === "done") return "This visit is finished.";
  // Skipped colonies need no confirmation (the server asks for it only when one was treated).
  const anyTreated = stop.colonies.some((c) => stop.tallies[c.label]?.outcome === "treated");
  if (!stop.supersConfirmed && anyTreated) return "Confirm that the honey supers are off first.";
  const missing = stop.colonies.filter((c) => !stop.tallies[c.label]);
  if (missing.length) return `Record every colony first: ${missing.map((c) => c.label).join(", ")} still open.`;
  const reasonless = stop.colonies.filter((c) => stop.tallies[c.label]?.outcome === "skipped" && !stop.tallies[c.label]?.skipReason);
  if (reasonless.length) return `Give a reason for each skipped colony (${reasonless.map((c) => c.label).join(", ")}).`;
  const unexplained = stop.colonies.filter((c) => stop.tallies[c.label]?.skipReason === "other" && !stop.tallies[c.label]?.skipNote);
  if (unexplained.length) return `Say what was wrong with ${unexplained.map((c) => c.label).join(", ")}.`;
  return null;
}

/** A new idempotency key for a change made on this phone. */
export function newChangeKey(kind: string): string {
  const random = globalThis.crypto?.randomUUID?.() ?? `${Date.now().toString(36)}-${Math.random().toString(36).slice(2)}`;
  return `${kind}-${random}`;
}
