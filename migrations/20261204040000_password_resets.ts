import type { Knex } from "knex";

// Account recovery and the profile's e-mail change, both by single-use links
// (app/models/password-resets.server.ts, app/models/profile.server.ts):
// - password_resets: a "forgot password" link e-mailed to the account's address;
// - email_changes: a link e-mailed to a new address, which becomes the account's address
//   when the link is followed.
// The link holds 32 random bytes; the tables keep only their SHA-256 (hex). A link works
// once (used_at) and until expires_at; requested_from is the client address that asked for
// it, for anyone looking into an unexpected link. Rows go a week after they expire.
// password_reset_limits is rate-limiter-flexible's store for the forgot-password form's
// limits (per address and per client network), made here so the app never creates tables.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("password_resets", (t) => {
    t.bigIncrements("id");
    t.text("token_hash").notNullable().unique();
    t.bigInteger("user_id").notNullable().references("users.id").onDelete("cascade");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("expires_at", { useTz: true }).notNullable();
    t.timestamp("used_at", { useTz: true });
    t.text("requested_from");
    t.check("token_hash ~ '^[0-9a-f]{64}$'", [], "password_resets_token_hash_check");
    t.check("expires_at > created_at", [], "password_resets_expiry_check");
    t.index(["user_id", "created_at"]);
    t.index(["expires_at"]);
  });

  await knex.schema.createTable("email_changes", (t) => {
    t.bigIncrements("id");
    t.text("token_hash").notNullable().unique();
    t.bigInteger("user_id").notNullable().references("users.id").onDelete("cascade");
    t.text("new_email").notNullable();
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("expires_at", { useTz: true }).notNullable();
    t.timestamp("used_at", { useTz: true });
    t.text("requested_from");
    t.check("token_hash ~ '^[0-9a-f]{64}$'", [], "email_changes_token_hash_check");
    t.check("new_email = lower(new_email) and position('@' in new_email) > 1", [], "email_changes_new_email_check");
    t.check("expires_at > created_at", [], "email_changes_expiry_check");
    t.index(["user_id", "created_at"]);
    t.index(["expires_at"]);
  });

  // The layout rate-limiter-flexible's PostgreSQL store expects (key, points, expire in ms).
  await knex.schema.createTable("password_reset_limits", (t) => {
    t.string("key", 255).primary();
    t.integer("points").notNullable().defaultTo(0);
    t.bigInteger("expire");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("password_reset_limits");
  await knex.schema.dropTableIfExists("email_changes");
  await knex.schema.dropTableIfExists("password_resets");
}
