/**
 * The treatment plan of one yard as customers and dispatchers see it: the dose per colony
 * and in all, the rounds and their dates, and the time a crew spends there. Pure: every
 * figure comes from the yard and the business's settings.
 */
import { anhydrousEquivalentGrams, checkVaporizerBand, type VaporizerBandProblem } from "./chemistry";
import { planCourse, type BroodStatus, type CourseRound } from "./courses";
import { doseGramsForColony, doseGramsForYard } from "./dose";
import { serviceMinutesForYard } from "./service-time";
import type { BusinessSettings } from "./settings";

export interface YardForPlan {
  colonies: number;
  broodBoxesPerColony: number;
  broodStatus: BroodStatus;
}

export interface YardTreatmentPlan {
  dosePerColonyGrams: number;
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
}

export function yardTreatmentPlan(
  yard: YardForPlan,
  settings: BusinessSettings,
  options: { firstDate: string; bookedRounds?: CourseRound[]; vaporizers?: number },
): YardTreatmentPlan {
  const rate = settings.doseGramsPerBroodBox;
  const dosePerRoundGrams = doseGramsForYard({ colonies: yard.colonies, broodBoxesPerColony: yard.broodBoxesPerColony }, rate);
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
    dosePerColonyGrams: doseGramsForColony(yard.broodBoxesPerColony, rate),
    dosePerRoundGrams,
    anhydrousPerRoundGrams: anhydrousEquivalentGrams(dosePerRoundGrams),
    doseForCourseGrams: doseGramsForYard({ colonies: yard.colonies * roundsToTreat, broodBoxesPerColony: yard.broodBoxesPerColony }, rate),
    rounds,
    roundsBooked,
    serviceMinutesPerRound: serviceMinutesForYard({
      colonies: yard.colonies,
      vaporizers,
      setupMinutes: settings.setupMinutes,
      sublimationSeconds: settings.sublimationSeconds,
      moveBetweenHivesMinutes: settings.moveBetweenHivesMinutes,
      blockReheatSeconds: settings.blockReheatSeconds,
      entranceClosedMinutes: settings.entranceClosedMinutes,
    }),
    vaporizers,
    blockBand,
    blockBandProblems: checkVaporizerBand(blockBand),
  };
}
