import type { Knex } from "knex";
import { isBoxType } from "~/domain/box-types";
import { crewFindingsNote } from "~/domain/colony-findings";
import { yardTreatmentPlan } from "~/domain/treatment-plan";
import { dateInZone } from "~/services/clock.server";
import { loadBusinessSettings } from "./settings.server";
import { listYardPhotos } from "./attachments.server";
import { currentCourseRounds, listColonies, listYardVisits, type YardSummary } from "./yards.server";

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
      colonies: colonies.filter((c) => c.active).map((c) => ({ broodBoxes: Number(c.broodBoxes), boxType: isBoxType(c.boxType) ? c.boxType : "deep" })),
    },
  );
  return { yard, colonies, visits, plan, photos, unitSystem: settings.unitSystem, doseRate: plan.doseRateGrams };
}

/** The note shown on a yard's edit form when the crew found its colonies otherwise than its figures; null when they match. */
export async function yardCrewFindings(db: Knex, yard: Pick<YardSummary, "id" | "broodBoxesPerColony" | "boxType">): Promise<string | null> {
  const colonies = (await listColonies(db, yard.id)).filter((c) => c.active);
  return crewFindingsNote(
    colonies.map((c) => ({ broodBoxes: Number(c.broodBoxes), boxType: isBoxType(c.boxType) ? c.boxType : "deep" })),
    { broodBoxesPerColony: yard.broodBoxesPerColony, boxType: isBoxType(yard.boxType) ? yard.boxType : "deep" },
  );
}
