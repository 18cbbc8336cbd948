import type { Knex } from "knex";
import { crewSchema, NEW_CREW_VALUES } from "~/forms/crew";
import { FIRST_CREW_NAME, type SetupInput } from "~/forms/setup";
import { createCrew } from "./crews.server";
import { saveBusinessSettings } from "./settings.server";
import { hashPassword } from "./users.server";

// The first run of a business of its own. Until it is set up, every page leads to /setup
// (the root loader); the setup page makes the owner account, saves the settings, makes the
// first crew at the depot and marks the business set up, all in one transaction, once.
//
// Set up means: the business_setup row exists (the setup page made it), or an owner account
// exists (the demo, or a database from before the setup page). The row keeps a business set
// up for good; the owner check keeps older databases from being offered the page at all.

/**
 * Setup and scripts/seed-if-empty.ts take the same transaction-scoped advisory lock, so two
 * setup submits, or a submit and a demo seed, run one after the other and the second sees
 * the first's rows.
 */
const FIRST_RUN_LOCK_KEY = 724_117_2026;

/** Whether the business has been set up (read from the database each time). */
export async function businessIsSetUp(db: Knex): Promise<boolean> {
  const result = await db.raw<{ rows: { done: boolean }[] }>(
    "select exists (select 1 from business_setup) or exists (select 1 from users where role = 'owner') as done",
  );
  return result.rows[0]?.done === true;
}

// Once set up, a business never goes back, so "yes" is remembered for the process and the
// root loader's check costs nothing on every later page.
let knownSetUp = false;

/** businessIsSetUp, answered from memory once it has been true. */
export async function businessSetUpRemembered(db: Knex): Promise<boolean> {
  if (knownSetUp) return true;
  knownSetUp = await businessIsSetUp(db);
  return knownSetUp;
}

export type SetupOutcome =
  | { outcome: "set-up"; ownerId: number; crewId: number }
  /** Someone finished setup first: the page no longer exists. */
  | { outcome: "already-set-up" }
  /** The owner's address has an account already (a customer who signed up before setup). */
  | { outcome: "email-taken" };

function isEmailTaken(error: unknown): boolean {
  const pg = error as { code?: string; constraint?: string } | null;
  return typeof pg === "object" && pg !== null && pg.code === "23505" && pg.constraint === "users_email_unique";
}

/**
 * Sets the business up: the owner account, the settings, "Crew 1" starting and ending its
 * day at the depot (the new-crew defaults: Monday to Friday, 08:00–17:00, the settings'
 * vaporizers per crew), the set-up row and the audit entries (settings.update, crew.create
 * and business.setup, each with the new owner as the actor). All or nothing, and once: the
 * check runs under the first-run lock, inside the transaction that writes.
 */
export async function completeSetup(db: Knex, input: SetupInput): Promise<SetupOutcome> {
  // Hashed before the lock, so a second submit does not wait behind bcrypt.
  const passwordHash = await hashPassword(input.owner.password);
  const crew = crewSchema.parse({
    ...NEW_CREW_VALUES,
    name: FIRST_CREW_NAME,
    startLabel: input.depot.label,
    startLat: String(input.depot.lat),
    startLng: String(input.depot.lng),
    vaporizers: String(input.settings.vaporizersPerCrew),
  });
  try {
    const outcome = await db.transaction(async (trx): Promise<SetupOutcome> => {
      await trx.raw("select pg_advisory_xact_lock(?)", [FIRST_RUN_LOCK_KEY]);
      if (await businessIsSetUp(trx)) return { outcome: "already-set-up" };
      if (await trx("users").where({ email: input.owner.email }).first("id")) return { outcome: "email-taken" };
      const [owner] = await trx("users")
        .insert({ email: input.owner.email, password_hash: passwordHash, role: "owner", name: input.owner.name })
        .returning("id");
      const ownerId = Number(owner.id);
      await saveBusinessSettings(trx, input.settings, ownerId);
      const crewId = await createCrew(trx, crew, ownerId);
      await trx("business_setup").insert({ id: true, owner_user_id: ownerId });
      await trx("audit_log").insert({
        actor_user_id: ownerId,
        action: "business.setup",
        entity_type: "user",
        entity_id: String(ownerId),
        after: JSON.stringify({
          businessName: input.settings.businessName,
          ownerName: input.owner.name,
          ownerEmail: input.owner.email,
          timeZone: input.settings.timeZone,
          firstCrew: FIRST_CREW_NAME,
          depot: input.depot,
        }),
      });
      return { outcome: "set-up", ownerId, crewId };
    });
    if (outcome.outcome !== "email-taken") knownSetUp = true;
    return outcome;
  } catch (error) {
    if (isEmailTaken(error)) return { outcome: "email-taken" };
    throw error;
  }
}
