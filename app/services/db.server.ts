import knex, { type Knex } from "knex";
import pg from "pg";
import config from "../../knexfile";

// Column types as the app wants them: `date` stays an ISO string (no time-zone shift),
// bigint ids and counts become numbers (ids stay far below 2^53), numeric becomes number.
pg.types.setTypeParser(pg.types.builtins.DATE, (value) => value);
pg.types.setTypeParser(pg.types.builtins.INT8, (value) => Number(value));
pg.types.setTypeParser(pg.types.builtins.NUMERIC, (value) => Number(value));

// One shared Knex instance, cached on globalThis so dev reloads do not open new pools.
const globalForDb = globalThis as unknown as { __varrouteDb?: Knex };

export const db: Knex = globalForDb.__varrouteDb ?? knex(config);
if (process.env.NODE_ENV !== "production") globalForDb.__varrouteDb = db;

/** Whether the database answers a trivial query within a few seconds. */
export async function databaseIsUp(database: Knex = db): Promise<{ ok: boolean; error?: string }> {
  try {
    await database.raw("select 1").timeout(5000, { cancel: true });
    return { ok: true };
  } catch (error) {
    return { ok: false, error: error instanceof Error ? error.message : String(error) };
  }
}
