import type { Knex } from "knex";

// Knex loads migration files with Node's own import(), which cannot read TypeScript
// inside Vitest; this source hands it the same files, loaded through Vite.
const modules = import.meta.glob<Knex.Migration>("../../migrations/*.ts", { eager: true });

export const migrationSource: Knex.MigrationSource<string> = {
  async getMigrations() {
    return Object.keys(modules).sort();
  },
  getMigrationName(migration) {
    return migration.split("/").pop()!;
  },
  async getMigration(migration) {
    return modules[migration];
  },
};

export function migrationConfig(): Knex.MigratorConfig {
  return { migrationSource, tableName: "knex_migrations" };
}
