import knex from "knex";
import config from "../../knexfile";
import { serverUrl, TEMPLATE_DATABASE } from "./database-names";
import { migrationConfig } from "./migration-source";

// Once per test run: a freshly migrated template database that each test file clones.
async function dropTestDatabases(admin: knex.Knex) {
  const { rows } = await admin.raw<{ rows: { datname: string }[] }>(
    "select datname from pg_database where datname like 'varroute_vitest_%'",
  );
  for (const { datname } of rows) await admin.raw(`drop database if exists "${datname}" with (force)`);
}

export default async function setup() {
  const admin = knex({ client: "pg", connection: serverUrl("postgres") });
  try {
    await dropTestDatabases(admin);
    await admin.raw(`create database ${TEMPLATE_DATABASE}`);
  } finally {
    await admin.destroy();
  }
  const template = knex({ ...config, connection: serverUrl(TEMPLATE_DATABASE), migrations: migrationConfig() });
  try {
    await template.migrate.latest();
  } finally {
    await template.destroy();
  }
  // After the run: drop the template and every per-file database.
  return async () => {
    const cleaner = knex({ client: "pg", connection: serverUrl("postgres") });
    try {
      await dropTestDatabases(cleaner);
    } finally {
      await cleaner.destroy();
    }
  };
}
