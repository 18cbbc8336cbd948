import knex, { type Knex } from "knex";
import config from "../../knexfile";

// One shared Knex instance, cached on globalThis so dev reloads do not open new pools.
const globalForDb = globalThis as unknown as { __varrouteDb?: Knex };

export const db: Knex = globalForDb.__varrouteDb ?? knex(config);
if (process.env.NODE_ENV !== "production") globalForDb.__varrouteDb = db;

export async function databaseIsUp(): Promise<{ ok: boolean; error?: string }> {
  try {
    await db.raw("select 1");
    return { ok: true };
  } catch (error) {
    return { ok: false, error: error instanceof Error ? error.message : String(error) };
  }
}
