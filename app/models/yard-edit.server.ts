import type { Knex } from "knex";
import type { YardInput } from "~/forms/yard";

function yardColumns(input: YardInput) {
  return {
    name: input.name,
    lat: input.lat,
    lng: input.lng,
    address: input.address,
    colony_count: input.colonyCount,
    brood_boxes_per_colony: input.broodBoxesPerColony,
    brood_status: input.broodStatus,
    supers_off: input.supersOff,
    access_notes: input.accessNotes,
  };
}

/** Keeps one active colony row per colony (H1…Hn): adds rows, or retires the highest-numbered. */
async function matchColonies(trx: Knex.Transaction, yardId: number, input: YardInput) {
  const existing = await trx("colonies").where({ yard_id: yardId }).select("id", "label", "active");
  const byNumber = new Map(existing.map((c) => [Number(c.label.replace(/^H/, "")), c]));
  for (let n = 1; n <= input.colonyCount; n++) {
    const row = byNumber.get(n);
    if (!row) await trx("colonies").insert({ yard_id: yardId, label: `H${n}`, brood_boxes: input.broodBoxesPerColony, brood_status: input.broodStatus });
    else await trx("colonies").where({ id: row.id }).update({ active: true, brood_boxes: input.broodBoxesPerColony, brood_status: input.broodStatus, updated_at: trx.fn.now() });
  }
  const retire = existing.filter((c) => !/^H\d+$/.test(c.label) || Number(c.label.slice(1)) > input.colonyCount).map((c) => c.id);
  if (retire.length) await trx("colonies").whereIn("id", retire).update({ active: false, updated_at: trx.fn.now() });
}

export async function createYard(db: Knex, customerId: number | string, input: YardInput, actorUserId: number | string): Promise<number> {
  return db.transaction(async (trx) => {
    const [yard] = await trx("yards").insert({ customer_id: Number(customerId), ...yardColumns(input) }).returning("id");
    await matchColonies(trx, yard.id, input);
    await trx("audit_log").insert({ actor_user_id: Number(actorUserId), action: "yard.create", entity_type: "yard", entity_id: String(yard.id), after: JSON.stringify(input) });
    return yard.id as number;
  });
}

/** Updates a yard of this customer; false when the yard is not theirs. Booked visits ahead
 *  take the new colony count, so the day's room and the crew's dose follow the change. */
export async function updateYard(db: Knex, customerId: number | string, yardId: number, input: YardInput, actorUserId: number | string): Promise<boolean> {
  return db.transaction(async (trx) => {
    const before = await trx("yards").where({ id: yardId, customer_id: Number(customerId) }).whereNull("archived_at").forUpdate().first();
    if (!before) return false;
    await trx("yards").where({ id: yardId }).update({ ...yardColumns(input), updated_at: trx.fn.now() });
    await matchColonies(trx, yardId, input);
    await trx("visits").where({ yard_id: yardId, status: "scheduled" }).update({ colonies_expected: input.colonyCount, updated_at: trx.fn.now() });
    await trx("audit_log").insert({
      actor_user_id: Number(actorUserId),
      action: "yard.update",
      entity_type: "yard",
      entity_id: String(yardId),
      before: JSON.stringify(before),
      after: JSON.stringify(input),
    });
    return true;
  });
}
