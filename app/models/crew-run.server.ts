import type { Knex } from "knex";
import type { SessionUser } from "./users.server";
import { comingRunsForCrew } from "./runs.server";
import { loadBusinessSettings } from "./settings.server";
import { dateInZone } from "~/services/clock.server";

/** The day a crew member's screen is for, and the crew's coming runs. */
export async function crewRunScreen(db: Knex, user: SessionUser, date: string | null) {
  const settings = await loadBusinessSettings(db);
  const today = dateInZone(new Date(), settings.timeZone);
  const serviceDate = date ?? today;
  const coming = user.crewId ? await comingRunsForCrew(db, user.crewId, today) : [];
  return { today, serviceDate, coming: coming.filter((c) => c.serviceDate !== serviceDate) };
}

export type CrewRunScreen = Awaited<ReturnType<typeof crewRunScreen>>;
