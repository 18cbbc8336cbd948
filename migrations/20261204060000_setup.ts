import type { Knex } from "knex";

// The first run of a business of its own (app/models/setup.server.ts, /setup): one row, made
// in the transaction that creates the owner account, the settings and the first crew. The
// business counts as set up once this row exists or an owner account does; the row keeps it
// set up for good, so the setup page never opens again, even if the owner role later changes
// hands. `id` is always true, so the table holds one row at most.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("business_setup", (t) => {
    t.boolean("id").primary().notNullable().defaultTo(true);
    t.timestamp("completed_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.bigInteger("owner_user_id").references("users.id").onDelete("set null");
    t.check("id", [], "business_setup_one_row_check");
  });
  // A database from before the setup page that has an owner (the demo, or a business made
  // by hand) is set up already.
  await knex.raw(
    "insert into business_setup (id, owner_user_id) select true, min(id) from users where role = 'owner' having count(*) > 0",
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("business_setup");
}
