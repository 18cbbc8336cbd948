import type { Knex } from "knex";

// The season's cap on applications per colony counts treated tallies in the service day's
// calendar year. A visit's own tallies are left out: re-recording a colony at the visit is a
// change, not a new application, and the crew's screen shows what was done before it.

/** The calendar year of a service day ("2026-11-10" → 2026): the season the cap counts in. */
export function seasonYear(serviceDate: string): number {
  return Number(serviceDate.slice(0, 4));
}

function treatedInSeason(db: Knex, year: number) {
  return db("tallies")
    .join("visits", "visits.id", "tallies.visit_id")
    .where("tallies.outcome", "treated")
    .whereNotNull("tallies.colony_id")
    .where("visits.service_date", ">=", `${year}-01-01`)
    .where("visits.service_date", "<=", `${year}-12-31`);
}

/** Treated tallies of one colony (by id, at this yard) in the service day's year, leaving out one visit's. */
export async function treatedThisSeason(db: Knex, input: { yardId: number; colonyId: number; serviceDate: string; exceptVisitId?: number }): Promise<number> {
  const query = treatedInSeason(db, seasonYear(input.serviceDate)).where("tallies.colony_id", input.colonyId).where("visits.yard_id", input.yardId);
  if (input.exceptVisitId !== undefined) query.whereNot("tallies.visit_id", input.exceptVisitId);
  const row = await query.count<{ n: string }[]>({ n: "tallies.id" }).first();
  return Number(row?.n ?? 0);
}

/**
 * Treated tallies per colony id at these yards in the service day's year, before the given
 * visits (their own tallies left out). Colonies never treated are absent.
 */
export async function treatedBeforeVisits(db: Knex, input: { yardIds: readonly number[]; serviceDate: string; visitIds: readonly number[] }): Promise<Map<number, number>> {
  if (input.yardIds.length === 0) return new Map();
  const rows = (await treatedInSeason(db, seasonYear(input.serviceDate))
    .whereIn("visits.yard_id", [...input.yardIds])
    .whereNotIn("tallies.visit_id", [...input.visitIds])
    .groupBy("tallies.colony_id")
    .select("tallies.colony_id", db.raw("count(*)::int as n"))) as unknown as { colony_id: string | number; n: number }[];
  return new Map(rows.map((r) => [Number(r.colony_id), Number(r.n)]));
}
