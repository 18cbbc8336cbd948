import type { Knex } from "knex";

// A living colony has at least one brood box, and a colony tallied "treated" received a dose.
// Until now 0 brood boxes was accepted everywhere, so a colony could be tallied "treated"
// with 0 g (app/forms/yard.ts, app/forms/customer-import.ts and app/models/tallies.server.ts
// now refuse it too).
//
// Repairs first, so the checks apply to databases that already hold such rows:
// - yards.brood_boxes_per_colony 0 → 1 and colonies.brood_boxes 0 → 1 (active and retired
//   colonies alike). One box is the least a living colony has; these figures plan doses to
//   come, while every tally keeps its own copy of the boxes it was dosed for, so no record of
//   past work changes. A retired colony gets a new box count when it is reactivated anyway.
// - a tally "treated" with 0 g (or 0 boxes) becomes "skipped", reason "other", with a note
//   saying why: no acid was recorded for it, so the application record's grams stay as they
//   were and only its count of colonies treated drops to what was actually dosed. Invoices
//   already issued are separate rows and are not touched.
//
// Wash samples by volume: tallies.wash_sample_ml holds the sample's volume when the crew gave
// it, and tallies.bees_estimated says that bees_sampled was estimated from that volume (the
// bees-per-100 mL setting) rather than counted.
const REPAIRED_TALLY_NOTE = "Recorded as treated with 0 g (no brood box on record); set to skipped by a data repair.";

export async function up(knex: Knex): Promise<void> {
  await knex("yards").where("brood_boxes_per_colony", "<", 1).update({ brood_boxes_per_colony: 1, updated_at: knex.fn.now() });
  await knex("colonies").where("brood_boxes", "<", 1).update({ brood_boxes: 1, updated_at: knex.fn.now() });
  await knex("tallies")
    .where({ outcome: "treated" })
    .where((q) => q.where("dose_grams", "<=", 0).orWhere("brood_boxes", "<", 1))
    .update({ outcome: "skipped", skip_reason: "other", skip_note: REPAIRED_TALLY_NOTE, dose_grams: 0, updated_at: knex.fn.now() });

  await knex.raw(`
    alter table yards
      drop constraint yards_brood_boxes_check,
      add constraint yards_brood_boxes_check check (brood_boxes_per_colony >= 1)`);
  await knex.raw(`
    alter table colonies
      drop constraint colonies_brood_boxes_check,
      add constraint colonies_brood_boxes_check check (brood_boxes >= 1)`);
  await knex.schema.alterTable("tallies", (t) => {
    t.decimal("wash_sample_ml", 6, 1);
    t.boolean("bees_estimated").notNullable().defaultTo(false);
    t.check("outcome <> 'treated' or (brood_boxes >= 1 and dose_grams > 0)", [], "tallies_treated_dose_check");
    t.check("wash_sample_ml is null or wash_sample_ml > 0", [], "tallies_wash_sample_check");
    t.check("not bees_estimated or (wash_sample_ml is not null and bees_sampled is not null)", [], "tallies_bees_estimated_check");
  });
}

// The repaired rows stay repaired: which ones were 0 before is not kept.
export async function down(knex: Knex): Promise<void> {
  await knex.raw("alter table tallies drop constraint tallies_treated_dose_check");
  await knex.schema.alterTable("tallies", (t) => {
    // Their checks name these columns, so PostgreSQL drops them with the columns.
    t.dropColumn("bees_estimated");
    t.dropColumn("wash_sample_ml");
  });
  await knex.raw(`
    alter table colonies
      drop constraint colonies_brood_boxes_check,
      add constraint colonies_brood_boxes_check check (brood_boxes >= 0)`);
  await knex.raw(`
    alter table yards
      drop constraint yards_brood_boxes_check,
      add constraint yards_brood_boxes_check check (brood_boxes_per_colony >= 0)`);
}
