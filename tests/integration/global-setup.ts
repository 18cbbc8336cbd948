import knex from "knex";
import type { TestProject } from "vitest/node";
import config from "../../knexfile";
import { PREFIX, runIdOf, serverUrl, templateDatabase } from "./database-names";
import { migrationConfig } from "./migration-source";

function processAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
}

/** Drops this run's databases, and those left behind by runs that no longer exist. */
async function dropDatabases(admin: knex.Knex, which: (runId: string) => boolean) {
  const { rows } = await admin.raw<{ rows: { datname: string }[] }>("select datname from pg_database where datname like ?", [`${PREFIX}%`]);
  for (const { datname } of rows) {
    const runId = runIdOf(datname);
    if (runId === null || which(runId)) await admin.raw(`drop database if exists "${datname}" with (force)`);
  }
}

// Once per test run: a freshly migrated template database that each test file clones.
export default async function setup(project: TestProject) {
  const runId = String(process.pid);
  project.provide("vitestRunId", runId);
  const admin = knex({ client: "pg", connection: serverUrl("postgres") });
  try {
    await dropDatabases(admin, (id) => id === runId || !processAlive(Number(id)));
    await admin.raw(`create database ${templateDatabase(runId)}`);
  } finally {
    await admin.destroy();
  }
  const template = knex({ ...config, connection: serverUrl(templateDatabase(runId)), migrations: migrationConfig() });
  try {
    await template.migrate.latest();
  } finally {
    await template.destroy();
  }
  // After the run: drop the template and every per-file database of this run.
  return async () => {
    const cleaner = knex({ client: "pg", connection: serverUrl("postgres") });
    try {
      await dropDatabases(cleaner, (id) => id === runId);
    } finally {
      await cleaner.destroy();
    }
  };
}
