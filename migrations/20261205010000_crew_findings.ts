import type { Knex } from "knex";

// What the crew finds at the hive:
// - tallies keep whether brood was seen (null when the crew did not say), beside the brood
//   boxes and box type their dose was worked out for;
// - applied_changes takes the air temperature change, so its key is kept like every other
//   change's key (it was kept in its audit row before).

const KINDS_BEFORE = ["safety", "supers", "tally", "finish"];
const KINDS = [...KINDS_BEFORE, "air_temp"];
const kindCheck = (kinds: string[]) => `kind in (${kinds.map((k) => `'${k}'`).join(", ")})`;

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("tallies", (t) => {
    t.boolean("brood_seen");
  });
  await knex.raw("alter table applied_changes drop constraint applied_changes_kind_check");
  await knex.raw(`alter table applied_changes add constraint applied_changes_kind_check check (${kindCheck(KINDS)})`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw("delete from applied_changes where kind = 'air_temp'");
  await knex.raw("alter table applied_changes drop constraint applied_changes_kind_check");
  await knex.raw(`alter table applied_changes add constraint applied_changes_kind_check check (${kindCheck(KINDS_BEFORE)})`);
  await knex.schema.alterTable("tallies", (t) => t.dropColumn("brood_seen"));
}
