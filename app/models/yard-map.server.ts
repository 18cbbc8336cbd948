import type { Knex } from "knex";

/** Where a yard stands for the coming treatment:
 *  - "booked": a scheduled or in-progress visit on or after today;
 *  - "in-course": not booked, but an active course still has a round to come;
 *  - "never": neither (no course under way and nothing booked). */
export const YARD_BOOKING_STATES = ["booked", "in-course", "never"] as const;
export type YardBookingState = (typeof YARD_BOOKING_STATES)[number];

export function isYardBookingState(value: unknown): value is YardBookingState {
  return typeof value === "string" && (YARD_BOOKING_STATES as readonly string[]).includes(value);
}

export type YardOnMap = {
  id: number;
  name: string;
  lat: number;
  lng: number;
  customerName: string;
  colonies: number;
  state: YardBookingState;
  /** The first scheduled or in-progress visit on or after today, if any. */
  nextVisitDate: string | null;
};

/** Every active (not archived) yard with its booking state, in one query, by name. */
export async function yardsWithBookingState(db: Knex, today: string): Promise<YardOnMap[]> {
  const rows: (Omit<YardOnMap, "state"> & { courseUnderWay: boolean })[] = await db("yards")
    .join("customers", "customers.id", "yards.customer_id")
    .whereNull("yards.archived_at")
    .select(
      "yards.id",
      "yards.name",
      "yards.lat",
      "yards.lng",
      "customers.name as customerName",
      "yards.colony_count as colonies",
      db("visits")
        .min("service_date")
        .whereRaw("visits.yard_id = yards.id")
        .where("service_date", ">=", today)
        .whereIn("status", ["scheduled", "in_progress"])
        .as("nextVisitDate"),
      // An active course with fewer rounds done than planned has a next round to book.
      db.raw(
        `exists (
          select 1 from courses
          where courses.yard_id = yards.id and courses.status = 'active'
            and (select count(*) from visits done where done.course_id = courses.id and done.status = 'done') < courses.rounds_planned
        ) as "courseUnderWay"`,
      ),
    )
    .orderBy([{ column: "yards.name" }, { column: "yards.id" }]);
  return rows.map(({ courseUnderWay, ...yard }) => ({
    ...yard,
    state: yard.nextVisitDate ? "booked" : courseUnderWay ? "in-course" : "never",
  }));
}

/** How many yards are in each booking state. */
export function countYardsByBookingState(yards: readonly { state: YardBookingState }[]): Record<YardBookingState, number> {
  const counts: Record<YardBookingState, number> = { booked: 0, "in-course": 0, never: 0 };
  for (const yard of yards) counts[yard.state] += 1;
  return counts;
}
