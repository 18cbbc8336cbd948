import type { Knex } from "knex";
import { yardBookingStates, type YardBookingState } from "./yard-booking-state.server";

// The dispatcher's map of yards. A yard's booking state is the yards table's
// (yard-booking-state.server.ts); the map only groups the five states into four pins.

/** The map's groups, in legend order, and the keys of its `?state=` filter. The keys
 *  "booked", "in-course" and "never" predate "requested" and stay for old links. */
export const YARD_MAP_GROUPS = ["booked", "requested", "in-course", "never"] as const;
export type YardMapGroup = (typeof YARD_MAP_GROUPS)[number];

export function isYardMapGroup(value: unknown): value is YardMapGroup {
  return typeof value === "string" && (YARD_MAP_GROUPS as readonly string[]).includes(value);
}

/** The map's group of each booking state: "never" holds both nothing booked now and never booked. */
export const YARD_MAP_GROUP_OF_STATE: Record<YardBookingState, YardMapGroup> = {
  booked: "booked",
  requested: "requested",
  in_course: "in-course",
  not_booked: "never",
  never_booked: "never",
};

export type YardOnMap = {
  id: number;
  name: string;
  lat: number;
  lng: number;
  customerName: string;
  colonies: number;
  state: YardBookingState;
  group: YardMapGroup;
  /** The first scheduled or in-progress visit on or after today, if any. */
  nextVisitDate: string | null;
  /** The first booking request on or after today not yet confirmed, if any. */
  requestedDate: string | null;
};

/** The yards the yards table lists (active yards of current customers) with their booking state, in one query, by name. */
export async function yardsWithBookingState(db: Knex, today: string): Promise<YardOnMap[]> {
  const rows: Omit<YardOnMap, "group">[] = await db("yards")
    .join("customers", "customers.id", "yards.customer_id")
    .join(yardBookingStates(db, today).as("bs"), "bs.yard_id", "yards.id")
    .whereNull("yards.archived_at")
    .whereNull("customers.anonymised_at")
    .select(
      "yards.id",
      "yards.name",
      "yards.lat",
      "yards.lng",
      "customers.name as customerName",
      "yards.colony_count as colonies",
      "bs.booking_state as state",
      "bs.next_visit_date as nextVisitDate",
      "bs.requested_date as requestedDate",
    )
    .orderBy([{ column: "yards.name" }, { column: "yards.id" }]);
  return rows.map((yard) => ({ ...yard, group: YARD_MAP_GROUP_OF_STATE[yard.state] }));
}

/** How many yards are in each of the map's groups. */
export function countYardsByMapGroup(yards: readonly { group: YardMapGroup }[]): Record<YardMapGroup, number> {
  const counts: Record<YardMapGroup, number> = { booked: 0, requested: 0, "in-course": 0, never: 0 };
  for (const yard of yards) counts[yard.group] += 1;
  return counts;
}
