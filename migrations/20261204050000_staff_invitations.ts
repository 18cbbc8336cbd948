import type { Knex } from "knex";

// Invitations the owner sends to new staff (app/models/staff.server.ts). The e-mailed link
// holds a signed random token; the table keeps only its SHA-256 hash, so a copy of the table
// opens no invitation. An invitation is good for 7 days and once: accepted_at when the
// account is made, revoked_at when the owner withdraws it. Resending replaces the token and
// the expiry. crew_id is the crew a crew member joins on accepting (optional).
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("staff_invitations", (t) => {
    t.bigIncrements("id");
    t.text("token_hash").notNullable().unique();
    t.text("email").notNullable();
    t.text("name").notNullable();
    t.text("role").notNullable();
    t.bigInteger("crew_id").references("crews.id").onDelete("set null");
    t.bigInteger("invited_by").references("users.id").onDelete("set null");
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("expires_at", { useTz: true }).notNullable();
    t.timestamp("accepted_at", { useTz: true });
    t.timestamp("revoked_at", { useTz: true });
    t.check("token_hash ~ '^[0-9a-f]{64}$'", [], "staff_invitations_token_hash_check");
    t.check("email = lower(email) and position('@' in email) > 1", [], "staff_invitations_email_check");
    // Staff roles only: customers sign up themselves.
    t.check("role in ('owner', 'dispatcher', 'office', 'crew')", [], "staff_invitations_role_check");
    t.check("crew_id is null or role = 'crew'", [], "staff_invitations_crew_check");
    t.check("expires_at > created_at", [], "staff_invitations_expiry_check");
    t.check("accepted_at is null or revoked_at is null", [], "staff_invitations_state_check");
    t.index(["email"]);
  });
  // At most one open invitation per address (neither accepted nor revoked).
  await knex.raw(
    "create unique index staff_invitations_one_open_per_email on staff_invitations (email) where accepted_at is null and revoked_at is null",
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("staff_invitations");
}
