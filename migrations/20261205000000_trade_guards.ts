import type { Knex } from "knex";

// Trade guards and records:
// - colonies and yards get a box type (deep, medium, nuc); every existing one is a deep, the
//   box the dose rate so far was given for;
// - tallies keep the box type their dose was worked out for;
// - visits record the air temperature the crew read at the yard;
// - a deleted customer's application-record fields are kept until records_kept_until.

const BOX_TYPES = ["deep", "medium", "nuc"];
const inList = (column: string) => `${column} in (${BOX_TYPES.map((t) => `'${t}'`).join(", ")})`;

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("yards", (t) => {
    t.text("box_type").notNullable().defaultTo("deep");
    t.check(inList("box_type"), [], "yards_box_type_check");
  });
  await knex.schema.alterTable("colonies", (t) => {
    t.text("box_type").notNullable().defaultTo("deep");
    t.check(inList("box_type"), [], "colonies_box_type_check");
  });
  await knex.schema.alterTable("tallies", (t) => {
    t.text("box_type").notNullable().defaultTo("deep");
    t.check(inList("box_type"), [], "tallies_box_type_check");
  });
  await knex.schema.alterTable("visits", (t) => {
    t.decimal("air_temp_c", 4, 1);
    t.check("air_temp_c is null or air_temp_c between -50 and 60", [], "visits_air_temp_check");
  });
  await knex.schema.alterTable("customers", (t) => {
    t.date("records_kept_until");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("customers", (t) => t.dropColumn("records_kept_until"));
  await knex.schema.alterTable("visits", (t) => t.dropColumn("air_temp_c"));
  for (const table of ["tallies", "colonies", "yards"]) {
    await knex.schema.alterTable(table, (t) => t.dropColumn("box_type"));
  }
}
