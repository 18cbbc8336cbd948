import type { Knex } from "knex";

// Crews' working rules and crew-day closures (app/models/crews.server.ts,
// app/models/working-days.server.ts, app/models/capacity.server.ts).
//
// crews.working_weekdays: ISO weekdays the crew works (1 = Monday … 7 = Sunday). Crews made
//   before this migration keep working every day, as they did, so no booked day loses room.
// crews.max_colonies_per_day / max_dose_grams_per_day: a crew's own ceiling for a day (null:
//   none). The booking capacity caps the crew's estimate at them and the day planner never
//   gives the crew more.
// crew_days: one crew's day closed (holiday, sick, truck in the shop) with a note; a row with
//   closed = false is a reopened day kept for its history.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("crews", (t) => {
    t.specificType("working_weekdays", "smallint[]").notNullable().defaultTo(knex.raw("'{1,2,3,4,5,6,7}'::smallint[]"));
    t.integer("max_colonies_per_day");
    t.decimal("max_dose_grams_per_day", 7, 2);
    t.check("working_weekdays <@ '{1,2,3,4,5,6,7}'::smallint[]", [], "crews_working_weekdays_check");
    t.check("max_colonies_per_day is null or max_colonies_per_day > 0", [], "crews_max_colonies_check");
    t.check("max_dose_grams_per_day is null or max_dose_grams_per_day > 0", [], "crews_max_dose_check");
  });

  await knex.schema.createTable("crew_days", (t) => {
    t.bigInteger("crew_id").notNullable().references("crews.id").onDelete("cascade");
    t.date("service_date").notNullable();
    t.boolean("closed").notNullable().defaultTo(true);
    t.text("note");
    t.bigInteger("updated_by").references("users.id").onDelete("set null");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("updated_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.primary(["crew_id", "service_date"]);
    t.index(["service_date"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("crew_days");
  await knex.schema.alterTable("crews", (t) => {
    // Each check names one column only, so PostgreSQL drops it with its column.
    t.dropColumn("max_dose_grams_per_day");
    t.dropColumn("max_colonies_per_day");
    t.dropColumn("working_weekdays");
  });
}
