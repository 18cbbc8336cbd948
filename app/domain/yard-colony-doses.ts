/**
 * The dose a yard is planned with, from its colonies as the crew last found them.
 *
 * The crew corrects each colony at the hive (brood boxes, box type), so a yard's colonies
 * need not all match the yard's own figures any more. What plans from the yard — the day's
 * grams, a booking's grams, the next round, the day planner's loads and minutes — goes by
 * its active colonies:
 * - grams per colony: the average of their doses, rounded UP to the centigram, so a day is
 *   never planned with less acid than its colonies take;
 * - vaporizer loads per colony: the most any of them needs, so the time at the yard covers
 *   its biggest colony (each colony waits for its loads in turn).
 * A yard with no active colony rows falls back to the yard's own figures. Pure.
 */
import { doseGramsForColonyOfType, vaporizerLoadsForDose, type BoxDoseRates, type BoxType } from "./box-types";
import { yardDoseGramsPerColony, type YardDoseShape } from "./capacity";
import { centigramsToGrams, gramsToCentigrams } from "./dose";
import { colonyDose } from "./treatment-plan";

/** Colonies of one shape at a yard: their brood boxes and box type, and how many (1 when not given). */
export interface ColoniesOfShape {
  broodBoxes: number;
  boxType: BoxType;
  count?: number;
}

/** The rates and the vaporizer load the planned dose depends on. */
export type PlannedDoseSettings = BoxDoseRates & { vaporizerLoadGrams: number };

/** How one colony of a yard is planned: grams, and the vaporizer loads it takes (≥ 1). */
export interface PlannedColonyDose {
  dosePerColonyGrams: number;
  loadsPerColony: number;
  /** True when worked out from the colonies, false when from the yard's own figures (no active colony). */
  fromColonies: boolean;
}

function countOf(shape: ColoniesOfShape): number {
  const count = shape.count ?? 1;
  if (!Number.isInteger(count) || count < 0) throw new RangeError(`colonies must be a whole number ≥ 0, got ${count}`);
  return count;
}

/** Only shapes that hold at least one colony count; none: the yard's figures are used. */
function present(colonies: readonly ColoniesOfShape[]): ColoniesOfShape[] {
  return colonies.filter((shape) => countOf(shape) > 0);
}

/**
 * Grams one colony of the yard is planned with: the average of its colonies' doses
 * (brood boxes × box type's rate each), rounded up to 0.01 g; the yard's own figures when
 * it has no colony.
 */
export function plannedDoseGramsPerColony(colonies: readonly ColoniesOfShape[], yard: YardDoseShape, rates: BoxDoseRates): number {
  const shapes = present(colonies);
  if (shapes.length === 0) return yardDoseGramsPerColony(yard, rates);
  let centigrams = 0;
  let count = 0;
  for (const shape of shapes) {
    const n = countOf(shape);
    centigrams += n * gramsToCentigrams(doseGramsForColonyOfType(shape.broodBoxes, shape.boxType, rates));
    count += n;
  }
  return centigramsToGrams(Math.ceil(centigrams / count));
}

/**
 * Vaporizer loads per colony the yard is planned with: the most any of its colonies' doses
 * takes (at least 1, as colonyDose plans); the yard's own figures when it has no colony.
 */
export function plannedLoadsPerColony(colonies: readonly ColoniesOfShape[], yard: YardDoseShape, settings: PlannedDoseSettings): number {
  const shapes = present(colonies);
  if (shapes.length === 0) return colonyDose(yard, settings).loadsPerColony;
  const loads = shapes.map((shape) => vaporizerLoadsForDose(doseGramsForColonyOfType(shape.broodBoxes, shape.boxType, settings), settings.vaporizerLoadGrams));
  return Math.max(1, ...loads);
}

/** Both figures of the yard's planned colony dose (see above). */
export function plannedColonyDose(colonies: readonly ColoniesOfShape[], yard: YardDoseShape, settings: PlannedDoseSettings): PlannedColonyDose {
  return {
    dosePerColonyGrams: plannedDoseGramsPerColony(colonies, yard, settings),
    loadsPerColony: plannedLoadsPerColony(colonies, yard, settings),
    fromColonies: present(colonies).length > 0,
  };
}

/** Grams for some colonies at a planned dose per colony (colonies × dose), to 0.01 g. */
export function gramsAtDosePerColony(colonies: number, dosePerColonyGrams: number): number {
  if (!Number.isInteger(colonies) || colonies < 0) throw new RangeError(`colonies must be a whole number ≥ 0, got ${colonies}`);
  return centigramsToGrams(colonies * gramsToCentigrams(dosePerColonyGrams));
}
