import type { Knex } from "knex";

// Application records name the product applied and its registration number. Settings hold
// today's product; a finished visit keeps the one in use when it was finished, so changing
// products later does not rewrite past records. Visits finished before this migration keep
// null and the records fall back to the settings.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("visits", (t) => {
    t.text("product_name");
    t.text("product_registration_number");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("visits", (t) => {
    t.dropColumn("product_registration_number");
    t.dropColumn("product_name");
  });
}
