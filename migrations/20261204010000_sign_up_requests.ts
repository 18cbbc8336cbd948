import type { Knex } from "knex";

// Sign-ups waiting for their e-mail address to be confirmed. The sign-up form answers the
// same whether or not the address has an account, and the account is made only from the
// link e-mailed to the address (app/models/sign-up-requests.server.ts). The link holds a
// random token; the table keeps only its SHA-256 hash, and the password only as its bcrypt
// hash. A request is good for 24 hours and once (used_at); a used one keeps only its token's
// hash and times, and every request is deleted a week after it expires.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("sign_up_requests", (t) => {
    t.bigIncrements("id");
    t.text("token_hash").notNullable().unique();
    t.text("name").notNullable();
    t.text("email").notNullable();
    t.text("phone");
    t.text("password_hash").notNullable();
    t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp("expires_at", { useTz: true }).notNullable();
    t.timestamp("used_at", { useTz: true });
    t.check("token_hash ~ '^[0-9a-f]{64}$'", [], "sign_up_requests_token_hash_check");
    t.check("email = lower(email) and position('@' in email) > 1", [], "sign_up_requests_email_check");
    t.check("expires_at > created_at", [], "sign_up_requests_expiry_check");
    t.index(["email", "created_at"]);
    t.index(["expires_at"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("sign_up_requests");
}
