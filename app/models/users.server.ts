import bcrypt from "bcryptjs";
import type { Knex } from "knex";
import { PASSWORD_MAX_BYTES } from "~/forms/account";
import type { Role, UserRow } from "./tables";

export type SessionUser = Pick<UserRow, "email" | "name" | "role"> & {
  id: string;
  customerId: string | null;
  crewId: string | null;
};

const BCRYPT_COST = 10;

/** A bcrypt hash of the password. Refuses a password over 72 bytes, which bcrypt would cut short without a word. */
export function hashPassword(password: string) {
  if (Buffer.byteLength(password, "utf8") > PASSWORD_MAX_BYTES) {
    return Promise.reject(new RangeError(`hashPassword: the password is longer than ${PASSWORD_MAX_BYTES} bytes`));
  }
  return bcrypt.hash(password, BCRYPT_COST);
}

export function normaliseEmail(email: string) {
  return email.trim().toLowerCase();
}

/** Loads a signed-in user with the customer or crew they belong to. */
export async function findSessionUser(db: Knex, userId: string): Promise<SessionUser | null> {
  const row = await db("users")
    .leftJoin("customers", "customers.user_id", "users.id")
    .leftJoin("crew_members", "crew_members.user_id", "users.id")
    .where("users.id", userId)
    .whereNull("users.disabled_at")
    .first<{ id: string; email: string; name: string; role: Role; customer_id: string | null; crew_id: string | null }>(
      "users.id",
      "users.email",
      "users.name",
      "users.role",
      "customers.id as customer_id",
      "crew_members.crew_id",
    );
  if (!row) return null;
  return {
    id: String(row.id),
    email: row.email,
    name: row.name,
    role: row.role,
    customerId: row.customer_id == null ? null : String(row.customer_id),
    crewId: row.crew_id == null ? null : String(row.crew_id),
  };
}

/** Checks an e-mail and password; returns the user id or null. Runs bcrypt even for
 *  unknown addresses so response time does not reveal which addresses exist. */
export async function verifyCredentials(db: Knex, email: string, password: string): Promise<string | null> {
  const user = await db("users").where({ email: normaliseEmail(email) }).whereNull("disabled_at").first();
  const hash = user?.password_hash ?? "$2b$10$Ed8H20cxXc6h8gk0pn39qOq3StMTfbiSK50GhwISOWyWM3HZ7aNia";
  const ok = await bcrypt.compare(password, hash);
  return user && ok ? String(user.id) : null;
}

export async function emailTaken(db: Knex, email: string) {
  return Boolean(await db("users").where({ email: normaliseEmail(email) }).first("id"));
}

/** Creates a customer's sign-in and customer record together, or neither. */
export async function createCustomerAccount(
  db: Knex,
  input: { name: string; email: string; password: string; phone?: string | null },
): Promise<string> {
  const passwordHash = await hashPassword(input.password);
  return db.transaction((trx) => insertCustomerAccount(trx, { ...input, passwordHash }));
}

/**
 * Inserts a customer's sign-in, customer record and audit entry, in the caller's
 * transaction; the password is hashed already (a confirmed sign-up kept only the hash).
 * Fails on the unique index when the e-mail has an account.
 */
export async function insertCustomerAccount(
  trx: Knex.Transaction,
  input: { name: string; email: string; passwordHash: string; phone?: string | null },
): Promise<string> {
  const email = normaliseEmail(input.email);
  const [user] = await trx("users")
    .insert({ email, password_hash: input.passwordHash, role: "customer", name: input.name, phone: input.phone ?? null })
    .returning("id");
  await trx("customers").insert({ user_id: user.id, name: input.name, email, phone: input.phone ?? null });
  await trx("audit_log").insert({
    actor_user_id: user.id,
    action: "customer.sign_up",
    entity_type: "user",
    entity_id: String(user.id),
    after: JSON.stringify({ email }),
  });
  return String(user.id);
}
