import type { Knex } from "knex";
import { crewFindingsNote, type ColonyBoxes } from "~/domain/colony-findings";
import { yardTreatmentPlan } from "~/domain/treatment-plan";
import { dateInZone } from "~/services/clock.server";
import { loadBusinessSettings } from "./settings.server";
import { listYardPhotos } from "./attachments.server";
import { currentCourseRounds, listColonies, listYardVisits, type ColonySummary, type YardSummary } from "./yards.server";

/** The boxes of a yard's active colonies, as the crew last found them. */
function activeColonyBoxes(colonies: readonly ColonySummary[]): ColonyBoxes[] {
  return colonies.filter((c) => c.active).map((c) => ({ broodBoxes: c.broodBoxes, boxType: c.boxType }));
}

/** Everything a yard page shows: colonies, visits, and the treatment plan in the business's units. */
export async function yardPageData(db: Knex, yard: YardSummary) {
  const [settings, colonies, visits, bookedRounds, photos] = await Promise.all([
    loadBusinessSettings(db),
    listColonies(db, yard.id),
    listYardVisits(db, yard.id),
    currentCourseRounds(db, yard.id),
    listYardPhotos(db, yard.id),
  ]);
  const today = dateInZone(new Date(), settings.timeZone);
  const plan = yardTreatmentPlan(
    { colonies: yard.colonyCount, broodBoxesPerColony: yard.broodBoxesPerColony, boxType: yard.boxType, broodStatus: yard.broodStatus as "brood" | "broodless" | "unknown" },
    settings,
    {
      firstDate: yard.nextVisitDate ?? today,
      bookedRounds,
      // As the crew last found them: the plan goes by these when they differ from the yard.
      colonies: activeColonyBoxes(colonies),
    },
  );
  return { yard, colonies, visits, plan, photos, unitSystem: settings.unitSystem, doseRate: plan.doseRateGrams };
}

/** The note shown on a yard's edit form when the crew found its colonies otherwise than its figures; null when they match. */
export async function yardCrewFindings(db: Knex, yard: Pick<YardSummary, "id" | "broodBoxesPerColony" | "boxType">): Promise<string | null> {
  return crewFindingsNote(activeColonyBoxes(await listColonies(db, yard.id)), { broodBoxesPerColony: yard.broodBoxesPerColony, boxType: yard.boxType });
}
