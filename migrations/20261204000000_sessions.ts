import type { Knex } from "knex";

// Sign-in sessions kept on the server, so signing out, a password change or a deleted
// account ends them at once (a cookie alone stays valid until it expires). The cookie holds
// a random token; the table keeps only its SHA-256 hash, so a copy of the table does not
// let anyone sign in. `data` holds the session's other values (flash notices).
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("sessions", (t) => {
    t.text("id").primary();
    t.bigInteger("user_id").notNullable().references("users.id").onDelete("cascade");
    t.jsonb("data").notNullable().defaultTo("{}");
    t.text("user_agent");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("last_seen_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("expires_at", { useTz: true }).notNullable();
    t.check("id ~ '^[0-9a-f]{64}$'", [], "sessions_id_check");
    t.check("jsonb_typeof(data) = 'object'", [], "sessions_data_check");
    t.index(["user_id"]);
    t.index(["expires_at"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("sessions");
}
