/**
 * What the crew found at the hives, set against the yard's own figures.
 *
 * A yard is booked with one figure for all its colonies (brood boxes and box type); the crew
 * corrects each colony at the hive. This module says which colonies differ and how, in words
 * the yard's owner and the office read, and decides what a yard edit does to the colonies:
 * changing the yard's boxes sets every colony to the new figures; an edit that leaves them
 * as they were keeps what the crew found. Pure.
 */
import type { BoxType } from "./box-types";
import type { ColoniesOfShape } from "./yard-colony-doses";

/** The yard's own box figures. */
export interface YardBoxes {
  broodBoxesPerColony: number;
  boxType: BoxType;
}

/** One active colony as it stands: its brood boxes and box type. */
export interface ColonyBoxes {
  broodBoxes: number;
  boxType: BoxType;
}

function boxesPhrase(boxes: number, type: BoxType): string {
  return `${boxes} ${type} brood ${boxes === 1 ? "box" : "boxes"}`;
}

/** The colonies grouped by shape, biggest group first, then more boxes first (each count ≥ 1). */
export function colonyShapes(colonies: readonly ColonyBoxes[]): Required<ColoniesOfShape>[] {
  const groups = new Map<string, Required<ColoniesOfShape>>();
  for (const colony of colonies) {
    const key = `${colony.boxType}:${colony.broodBoxes}`;
    const group = groups.get(key) ?? { broodBoxes: colony.broodBoxes, boxType: colony.boxType, count: 0 };
    group.count += 1;
    groups.set(key, group);
  }
  return [...groups.values()].sort((a, b) => b.count - a.count || b.broodBoxes - a.broodBoxes || a.boxType.localeCompare(b.boxType));
}

/** True when every colony has the yard's boxes (or the yard has no colony rows). */
export function coloniesMatchYard(colonies: readonly ColonyBoxes[], yard: YardBoxes): boolean {
  return colonies.every((c) => c.broodBoxes === yard.broodBoxesPerColony && c.boxType === yard.boxType);
}

/**
 * "3 colonies of 2 deep brood boxes and 1 of 1 deep brood box": the colonies as they stand,
 * in words. Empty for no colonies.
 */
export function describeColonyShapes(colonies: readonly ColonyBoxes[]): string {
  const parts = colonyShapes(colonies).map((shape, i) => `${shape.count}${i === 0 ? (shape.count === 1 ? " colony" : " colonies") : ""} of ${boxesPhrase(shape.broodBoxes, shape.boxType)}`);
  if (parts.length <= 1) return parts.join("");
  return `${parts.slice(0, -1).join(", ")} and ${parts.at(-1)}`;
}

/**
 * The sentence shown beside a yard's figures when the crew found its colonies otherwise;
 * null when they all match the yard.
 */
export function crewFindingsNote(colonies: readonly ColonyBoxes[], yard: YardBoxes): string | null {
  if (colonies.length === 0 || coloniesMatchYard(colonies, yard)) return null;
  const differing = colonies.filter((c) => c.broodBoxes !== yard.broodBoxesPerColony || c.boxType !== yard.boxType).length;
  const lead = differing === 1 ? "1 colony differs" : `${differing} colonies differ`;
  return `The crew found ${describeColonyShapes(colonies)} (${lead} from the yard's ${boxesPhrase(yard.broodBoxesPerColony, yard.boxType)}). Doses are planned as the crew found them.`;
}

/**
 * Whether a yard edit sets every colony to the yard's new boxes: only when the edit changes
 * the yard's brood boxes or box type. Otherwise each colony keeps what the crew found.
 */
export function editResetsColonyBoxes(before: YardBoxes, after: YardBoxes): boolean {
  return before.broodBoxesPerColony !== after.broodBoxesPerColony || before.boxType !== after.boxType;
}

/** A colony row of a yard as stored: its label (H1…Hn for the yard's own), whether active, its boxes. */
export interface StoredColony extends ColonyBoxes {
  label: string;
  active: boolean;
}

/**
 * The boxes of the yard's active colonies once an edit to `colonyCount` colonies is saved:
 * H1…Hn, each as the crew found it when it stays active and the edit keeps the yard's boxes,
 * else at the yard's (new) figures. The yard edit writes exactly this (yard-edit.server.ts),
 * and plans the booked days' grams from it before writing.
 */
export function coloniesAfterYardEdit(stored: readonly StoredColony[], yard: YardBoxes & { colonyCount: number }, resetBoxes: boolean): ColonyBoxes[] {
  const byLabel = new Map(stored.map((c) => [c.label, c]));
  const after: ColonyBoxes[] = [];
  for (let n = 1; n <= yard.colonyCount; n++) {
    const row = byLabel.get(`H${n}`);
    after.push(row && row.active && !resetBoxes ? { broodBoxes: row.broodBoxes, boxType: row.boxType } : { broodBoxes: yard.broodBoxesPerColony, boxType: yard.boxType });
  }
  return after;
}
