/**
 * The treatment plan of one yard as customers and dispatchers see it: the dose per colony
 * and in all, the rounds and their dates, and the time a crew spends there. Pure: every
 * figure comes from the yard (or its colonies as the crew found them) and the business's
 * settings.
 */
import { anhydrousEquivalentGrams, checkVaporizerBand, type VaporizerBandProblem } from "./chemistry";
import { planCourse, type BroodStatus, type CourseRound } from "./courses";
import { doseGramsForColonyOfType, doseRateForBoxType, vaporizerLoadsForDose, type BoxType } from "./box-types";
import { crewFindingsNote, type ColonyBoxes } from "./colony-findings";
import { centigramsToGrams, doseGramsForYard, gramsToCentigrams } from "./dose";
import { serviceMinutesForYard } from "./service-time";
import type { BusinessSettings } from "./settings";

export interface YardForPlan {
  colonies: number;
  broodBoxesPerColony: number;
  /** The yard's brood box type (deep when not given, the box the label's rate is for). */
  boxType?: BoxType;
  broodStatus: BroodStatus;
}

/** How one colony of a yard is dosed: the box type's rate, the grams, and the vaporizer loads. */
export interface ColonyDose {
  broodBoxesPerColony: number;
  boxType: BoxType;
  /** Grams per brood box of this type, from the settings. */
  doseRateGrams: number;
  dosePerColonyGrams: number;
  /** Vaporizer loads a colony's dose takes (at least 1: every living colony's dose is more than 0 g). */
  loadsPerColony: number;
}

type DoseSettings = Pick<BusinessSettings, "doseGramsPerBroodBox" | "doseGramsPerMediumBox" | "doseGramsPerNucBox" | "vaporizerLoadGrams">;

/** The dose of one colony of a yard (the plan and the day planner share it). */
export function colonyDose(yard: { broodBoxesPerColony: number; boxType?: BoxType }, settings: DoseSettings): ColonyDose {
  const boxType = yard.boxType ?? "deep";
  const dosePerColonyGrams = doseGramsForColonyOfType(yard.broodBoxesPerColony, boxType, settings);
  return {
    broodBoxesPerColony: yard.broodBoxesPerColony,
    boxType,
    doseRateGrams: doseRateForBoxType(settings, boxType),
    dosePerColonyGrams,
    loadsPerColony: vaporizerLoadsForDose(dosePerColonyGrams, settings.vaporizerLoadGrams),
  };
}

export interface YardTreatmentPlan extends ColonyDose {
  dosePerRoundGrams: number;
  anhydrousPerRoundGrams: number;
  doseForCourseGrams: number;
  rounds: CourseRound[];
  /** True when the rounds come from a booked course, false when planned from the first date. */
  roundsBooked: boolean;
  serviceMinutesPerRound: number;
  vaporizers: number;
  blockBand: { minC: number; maxC: number };
  blockBandProblems: VaporizerBandProblem[];
  /**
   * When the crew found the colonies otherwise than the yard's figures, what they found, in
   * words; the doses and time are then planned from the colonies (dosePerColonyGrams is their
   * average, rounded up to 0.01 g). Null when they match the yard.
   */
  crewFindings: string | null;
}

/**
 * The doses of a yard planned from its colonies as the crew found them: grams per round are
 * each colony's own dose added up, loads per colony the most any colony takes.
 */
function dosesFromColonies(colonies: readonly ColonyBoxes[], settings: DoseSettings) {
  const doses = colonies.map((c) => colonyDose({ broodBoxesPerColony: c.broodBoxes, boxType: c.boxType }, settings));
  const perRound = doses.reduce((sum, d) => sum + gramsToCentigrams(d.dosePerColonyGrams), 0);
  return {
    perRoundCentigrams: perRound,
    averageGrams: centigramsToGrams(Math.ceil(perRound / colonies.length)),
    loadsPerColony: Math.max(1, ...doses.map((d) => d.loadsPerColony)),
  };
}

export function yardTreatmentPlan(
  yard: YardForPlan,
  settings: BusinessSettings,
  options: {
    firstDate: string;
    bookedRounds?: CourseRound[];
    vaporizers?: number;
    /** The yard's active colonies as the crew last found them; the plan goes by them when they differ from the yard. */
    colonies?: readonly ColonyBoxes[];
  },
): YardTreatmentPlan {
  const yardDose = colonyDose(yard, settings);
  const rate = yardDose.doseRateGrams;
  const found = options.colonies?.length ? options.colonies : null;
  const crewFindings = found ? crewFindingsNote(found, { broodBoxesPerColony: yard.broodBoxesPerColony, boxType: yardDose.boxType }) : null;
  const fromColonies = found && crewFindings ? dosesFromColonies(found, settings) : null;
  const colonies = fromColonies ? found!.length : yard.colonies;
  const dose: ColonyDose = fromColonies ? { ...yardDose, dosePerColonyGrams: fromColonies.averageGrams, loadsPerColony: fromColonies.loadsPerColony } : yardDose;
  const perRoundCentigrams = fromColonies ? fromColonies.perRoundCentigrams : gramsToCentigrams(doseGramsForYard({ colonies, broodBoxesPerColony: yard.broodBoxesPerColony }, rate));
  const dosePerRoundGrams = centigramsToGrams(perRoundCentigrams);
  const roundsBooked = Boolean(options.bookedRounds?.length);
  const rounds = roundsBooked
    ? options.bookedRounds!
    : planCourse({
        broodStatus: yard.broodStatus,
        firstDate: options.firstDate,
        roundsWithBrood: settings.roundsWithBrood,
        intervalDays: settings.roundIntervalDays,
      });
  const roundsToTreat = rounds.filter((r) => r.status !== "cancelled").length;
  const vaporizers = options.vaporizers ?? settings.vaporizersPerCrew;
  const blockBand = { minC: settings.blockMinC, maxC: settings.blockMaxC };
  return {
    ...dose,
    dosePerRoundGrams,
    anhydrousPerRoundGrams: anhydrousEquivalentGrams(dosePerRoundGrams),
    doseForCourseGrams: centigramsToGrams(perRoundCentigrams * roundsToTreat),
    rounds,
    roundsBooked,
    serviceMinutesPerRound: serviceMinutesForYard({
      colonies,
      vaporizers,
      loadsPerColony: dose.loadsPerColony,
      setupMinutes: settings.setupMinutes,
      sublimationSeconds: settings.sublimationSeconds,
      moveBetweenHivesMinutes: settings.moveBetweenHivesMinutes,
      blockReheatSeconds: settings.blockReheatSeconds,
      entranceClosedMinutes: settings.entranceClosedMinutes,
    }),
    vaporizers,
    blockBand,
    blockBandProblems: checkVaporizerBand(blockBand),
    crewFindings,
  };
}
