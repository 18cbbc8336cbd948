import type { Knex } from "knex";
import { doseGramsForRun, doseGramsForYard } from "~/domain/dose";
import type { SessionUser } from "./users.server";
import { comingRunsForCrew, publishedRunForCrew } from "./runs.server";
import { loadBusinessSettings } from "./settings.server";
import { dateInZone } from "~/services/clock.server";

/** What a crew member's run screen shows for one day: the run (if published), doses to
 *  carry, the vaporizer figures, and the crew's coming runs. */
export async function crewRunScreen(db: Knex, user: SessionUser, date: string | null) {
  const settings = await loadBusinessSettings(db);
  const today = dateInZone(new Date(), settings.timeZone);
  const serviceDate = date ?? today;
  const shown = {
    unitSystem: settings.unitSystem,
    timeZone: settings.timeZone,
    blockMinC: settings.blockMinC,
    blockMaxC: settings.blockMaxC,
    sublimationSeconds: settings.sublimationSeconds,
    entranceClosedMinutes: settings.entranceClosedMinutes,
    doseGramsPerBroodBox: settings.doseGramsPerBroodBox,
  };
  if (!user.crewId) return { today, serviceDate, run: null, coming: [], settings: shown };
  const [run, coming] = await Promise.all([publishedRunForCrew(db, user.crewId, serviceDate), comingRunsForCrew(db, user.crewId, today)]);
  const stops = (run?.stops ?? []).map((stop) => ({
    ...stop,
    grams: doseGramsForYard({ colonies: stop.colonies, broodBoxesPerColony: stop.broodBoxesPerColony }, settings.doseGramsPerBroodBox),
  }));
  return {
    today,
    serviceDate,
    run: run ? { ...run, stops, grams: doseGramsForRun(stops.map((s) => s.grams)) } : null,
    coming: coming.filter((c) => c.serviceDate !== serviceDate),
    settings: shown,
  };
}

export type CrewRunScreen = Awaited<ReturnType<typeof crewRunScreen>>;
