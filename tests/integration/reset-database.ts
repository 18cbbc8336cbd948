import type { Knex } from "knex";

/** Empties every application table (not the migration bookkeeping) and resets ids. */
export async function resetDatabase(db: Knex) {
  const { rows } = await db.raw<{ rows: { tablename: string }[] }>(
    "select tablename from pg_tables where schemaname = 'public' and tablename not like 'knex_migrations%'",
  );
  if (rows.length === 0) return;
  await db.raw(`truncate ${rows.map((r) => `"${r.tablename}"`).join(", ")} restart identity cascade`);
}
