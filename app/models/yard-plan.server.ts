import type { Knex } from "knex";
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
    { firstDate: yard.nextVisitDate ?? today, bookedRounds },
  );
  return { yard, colonies, visits, plan, photos, unitSystem: settings.unitSystem, doseRate: plan.doseRateGrams };
}
