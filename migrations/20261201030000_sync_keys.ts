import type { Knex } from "knex";

// Changes a crew's phone sent, by their idempotency key: safety checks, supers confirmed,
// tallies and visit finishes. A change is applied in the same transaction that writes its
// key here, so a change sent twice (a retry after a lost answer, a replayed offline queue)
// is applied once, and the replay is answered with the first result.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("applied_changes", (t) => {
    t.text("key").primary();
    t.bigInteger("crew_id").notNullable().references("crews.id").onDelete("cascade");
    t.text("kind").notNullable();
    t.bigInteger("visit_id").references("visits.id").onDelete("set null");
    t.bigInteger("user_id").references("users.id").onDelete("set null");
    t.timestamp("applied_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.jsonb("result").notNullable();
    t.check("kind in ('safety', 'supers', 'tally', 'finish')", [], "applied_changes_kind_check");
    t.check("length(key) between 1 and 200", [], "applied_changes_key_check");
    t.index(["crew_id", "applied_at"]);
    t.index(["visit_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("applied_changes");
}
