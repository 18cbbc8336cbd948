import type { Knex } from "knex";

// A row per service day that has bookings or a dispatcher's setting. Booking locks the
// day's row (select … for update), so concurrent bookings for one day queue up and a day
// never takes more colonies than fit. The dispatcher may close a day or set its capacity.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("service_days", (t) => {
    t.date("service_date").primary();
    t.integer("capacity_colonies");
    t.boolean("closed").notNullable().defaultTo(false);
    t.text("note");
    t.bigInteger("updated_by").references("users.id").onDelete("set null");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("updated_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.check("capacity_colonies is null or capacity_colonies >= 0", [], "service_days_capacity_check");
  });
  await knex.schema.alterTable("visits", (t) => {
    t.index(["service_date", "status"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("visits", (t) => {
    t.dropIndex(["service_date", "status"]);
  });
  await knex.schema.dropTable("service_days");
}
