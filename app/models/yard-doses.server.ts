import type { Knex } from "knex";
import { boxTypeOrDeep, type BoxType } from "~/domain/box-types";
import { typicalLoadsPerColony } from "~/domain/capacity";
import { plannedColonyDose, type ColoniesOfShape, type PlannedColonyDose, type PlannedDoseSettings } from "~/domain/yard-colony-doses";

// The dose each yard is planned with, from its active colonies as the crew last corrected
// them (app/domain/yard-colony-doses.ts); the yard's own figures when it has none.

type ShapeRow = {
  yard_id: number;
  yard_box_type: string;
  brood_boxes_per_colony: number;
  colony_box_type: string | null;
  colony_brood_boxes: number | null;
  colonies: number;
};

/**
 * The planned colony dose of each yard (grams per colony, vaporizer loads per colony), by
 * yard id. One query for all the yards: their active colonies counted per shape.
 */
export async function plannedYardDoses(db: Knex, settings: PlannedDoseSettings, yardIds: readonly number[]): Promise<Map<number, PlannedColonyDose>> {
  const ids = [...new Set(yardIds.map(Number))];
  if (ids.length === 0) return new Map();
  const rows = (await db("yards")
    .leftJoin("colonies", (join) => join.on("colonies.yard_id", "=", "yards.id").andOnVal("colonies.active", "=", true))
    .whereIn("yards.id", ids)
    .groupBy("yards.id", "yards.box_type", "yards.brood_boxes_per_colony", "colonies.box_type", "colonies.brood_boxes")
    .select(
      "yards.id as yard_id",
      "yards.box_type as yard_box_type",
      "yards.brood_boxes_per_colony",
      "colonies.box_type as colony_box_type",
      "colonies.brood_boxes as colony_brood_boxes",
      db.raw("count(colonies.id)::int as colonies"),
    )) as unknown as ShapeRow[];

  const byYard = new Map<number, { yard: { boxType: BoxType; broodBoxesPerColony: number }; colonies: ColoniesOfShape[] }>();
  for (const row of rows) {
    const id = Number(row.yard_id);
    const entry = byYard.get(id) ?? { yard: { boxType: boxTypeOrDeep(row.yard_box_type), broodBoxesPerColony: Number(row.brood_boxes_per_colony) }, colonies: [] };
    // A yard without an active colony comes back as one row of nulls, counted 0.
    if (row.colony_brood_boxes != null && Number(row.colonies) > 0) {
      entry.colonies.push({ broodBoxes: Number(row.colony_brood_boxes), boxType: boxTypeOrDeep(row.colony_box_type), count: Number(row.colonies) });
    }
    byYard.set(id, entry);
  }
  return new Map([...byYard].map(([id, { yard, colonies }]) => [id, plannedColonyDose(colonies, yard, settings)]));
}

/**
 * Vaporizer loads a typical colony on the books takes (typicalLoadsPerColony in capacity.ts):
 * the median over the colonies of the yards in use (not archived), each yard's colonies
 * counted at the loads one of them is planned with. 1 when no yard has a colony.
 */
export async function typicalColonyLoads(db: Knex, settings: PlannedDoseSettings): Promise<number> {
  const yards = (await db("yards").whereNull("archived_at").where("colony_count", ">", 0).select("id", "colony_count")) as { id: number; colony_count: number }[];
  // One query after the other: `db` may be a transaction.
  const doses = await plannedYardDoses(db, settings, yards.map((y) => Number(y.id)));
  return typicalLoadsPerColony(yards.map((y) => ({ colonies: Number(y.colony_count), loadsPerColony: doses.get(Number(y.id))?.loadsPerColony ?? 1 })));
}
