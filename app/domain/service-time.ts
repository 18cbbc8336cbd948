/**
 * Service time at a yard: how long a crew spends from arrival to departure.
 *
 * The model (all times in minutes unless named seconds):
 *
 * - Each vaporizer works hive after hive. At a hive the dose sublimates for
 *   `sublimationSeconds` (about 30–40 s at a 230–240 °C block, common practice). Then the
 *   crew member moves on: walks to the next hive, loads the next dose, closes that entrance
 *   and reopens entrances whose wait is over — all of that is `moveBetweenHivesMinutes`.
 *   Meanwhile the block reheats; the next dose cannot start before the block is back at
 *   temperature, so the gap between two doses on one vaporizer is
 *   max(moveBetweenHivesMinutes, blockReheatSeconds / 60). One hive therefore costs
 *   `perHiveMinutes` = sublimation + that gap.
 * - With V vaporizers the crew works V hives side by side, so the hives are done in
 *   ceil(colonies / V) cycles (3 colonies with 2 vaporizers take 2 cycles, not 1.5: a
 *   vaporizer cannot split a hive). No gap follows the last cycle.
 * - The entrance stays closed `entranceClosedMinutes` after its dose. For every hive but
 *   the last ones that wait overlaps the work on the following hives — the crew does not
 *   stand and wait per hive. The hives dosed in the last cycle were dosed last, so once
 *   their wait is over every earlier wait is over too: the crew waits exactly one
 *   `entranceClosedMinutes` after the last dose, reopens, and leaves (packing up happens
 *   during that wait).
 * - `setupMinutes` covers parking, unloading, lighting and suiting up, and greeting.
 *
 * - A colony whose dose is more than one vaporizer load takes several loads; each load is a
 *   dose slot of its own, so the cycles count loads: ceil(colonies × loads / V).
 *
 *   serviceMinutesForYard = setup + cycles × sublimation + (cycles − 1) × gap + entranceClosed
 *
 * A yard with 0 colonies needs no visit, so it takes 0 minutes (no set-up either). The
 * result never decreases as colonies grow, and never increases as vaporizers are added.
 */

/** The per-hive working figures a business sets. */
export interface HiveCycle {
  /** Seconds one dose takes to vaporize. */
  sublimationSeconds: number;
  /** Minutes from one hive's dose done to the next hive ready to dose. */
  moveBetweenHivesMinutes: number;
  /** Seconds a vaporizer block needs to get back to working temperature after a dose. */
  blockReheatSeconds: number;
  /** Minutes an entrance stays closed after its dose. */
  entranceClosedMinutes: number;
}

/** Everything the service time of one yard depends on. */
export interface YardServiceInput extends HiveCycle {
  colonies: number;
  /** Vaporizers the crew works with at once (≥ 1). */
  vaporizers: number;
  /** Minutes of set-up at the yard (parking, unloading, suiting up, pack-up excluded). */
  setupMinutes: number;
  /** Vaporizer loads each colony's dose takes (default 1): a dose above one load is given in several. */
  loadsPerColony?: number;
}

function assertMinutes(value: number, what: string): void {
  if (!Number.isFinite(value) || value < 0) throw new RangeError(`${what} must be a finite number ≥ 0, got ${value}`);
}

function assertCycle(cycle: HiveCycle): void {
  assertMinutes(cycle.sublimationSeconds, "sublimation seconds");
  assertMinutes(cycle.moveBetweenHivesMinutes, "move between hives");
  assertMinutes(cycle.blockReheatSeconds, "block reheat seconds");
  assertMinutes(cycle.entranceClosedMinutes, "entrance closed minutes");
}

/** Minutes between two doses on one vaporizer: the move, or the block reheat if that is longer. */
export function gapBetweenDosesMinutes(cycle: HiveCycle): number {
  return Math.max(cycle.moveBetweenHivesMinutes, cycle.blockReheatSeconds / 60);
}

/** Minutes one hive costs one vaporizer: the dose vaporizing plus the gap to the next dose. */
export function perHiveMinutes(cycle: HiveCycle): number {
  assertCycle(cycle);
  return cycle.sublimationSeconds / 60 + gapBetweenDosesMinutes(cycle);
}

/** Cycles needed to dose a number of colonies with a number of vaporizers side by side. */
export function treatmentCycles(colonies: number, vaporizers: number): number {
  if (!Number.isInteger(colonies) || colonies < 0) throw new RangeError(`colonies must be a whole number ≥ 0, got ${colonies}`);
  if (!Number.isInteger(vaporizers) || vaporizers < 1) {
    throw new RangeError(`vaporizers must be a whole number ≥ 1, got ${vaporizers}`);
  }
  return Math.ceil(colonies / vaporizers);
}

/** Minutes a crew spends at a yard (see the model above); 0 colonies → 0. */
export function serviceMinutesForYard(input: YardServiceInput): number {
  assertCycle(input);
  assertMinutes(input.setupMinutes, "set-up minutes");
  const loads = input.loadsPerColony ?? 1;
  if (!Number.isInteger(loads) || loads < 1) throw new RangeError(`loads per colony must be a whole number ≥ 1, got ${loads}`);
  // Each load is one dose slot on a vaporizer, with the block back at temperature between them.
  const cycles = treatmentCycles(input.colonies * loads, input.vaporizers);
  if (cycles === 0) return 0;
  return (
    input.setupMinutes +
    (cycles * input.sublimationSeconds) / 60 +
    (cycles - 1) * gapBetweenDosesMinutes(input) +
    input.entranceClosedMinutes
  );
}

/**
 * The most colonies one crew can treat in a working time at a single yard (no driving):
 * an upper bound for a crew-day. 0 when not even one colony fits.
 */
export function coloniesPerCrewDay(workingMinutes: number, yard: Omit<YardServiceInput, "colonies">): number {
  assertMinutes(workingMinutes, "working minutes");
  const { vaporizers } = yard;
  const fits = (colonies: number) => serviceMinutesForYard({ ...yard, colonies }) <= workingMinutes;
  if (!fits(1)) {
    treatmentCycles(0, vaporizers); // still validate vaporizers
    return 0;
  }
  // Time left after set-up, the first dose and the final wait pays for further cycles.
  const cycleMinutes = yard.sublimationSeconds / 60 + gapBetweenDosesMinutes(yard);
  const spare = workingMinutes - serviceMinutesForYard({ ...yard, colonies: 1 });
  let cycles = cycleMinutes > 0 ? 1 + Math.floor(spare / cycleMinutes) : Number.POSITIVE_INFINITY;
  if (!Number.isFinite(cycles)) throw new RangeError("a hive cycle of 0 minutes allows unlimited colonies");
  // Guard the closed form against floating-point edges with the function itself.
  while (cycles > 1 && !fits(cycles * vaporizers)) cycles--;
  while (fits((cycles + 1) * vaporizers)) cycles++;
  return cycles * vaporizers;
}
