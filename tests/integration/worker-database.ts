import knex from "knex";
import { inject } from "vitest";
import { fileDatabase, serverUrl, templateDatabase } from "./database-names";

// Before each test file: a private database cloned from this run's migrated template, so
// test files run in parallel without touching each other. DATABASE_URL is set before the
// file imports any app module, so app/services/db.server.ts connects to it.
const runId = inject("vitestRunId");
const name = fileDatabase(runId, process.env.VITEST_POOL_ID ?? "0", process.pid);
const admin = knex({ client: "pg", connection: serverUrl("postgres"), pool: { min: 0, max: 1 } });
try {
  await admin.raw(`drop database if exists ${name} with (force)`);
  for (let attempt = 0; ; attempt++) {
    try {
      await admin.raw(`create database ${name} template ${templateDatabase(runId)}`);
      break;
    } catch (error) {
      // Another file may be cloning the template at the same moment.
      if (attempt > 20) throw error;
      await new Promise((r) => setTimeout(r, 100 + 50 * attempt));
    }
  }
} finally {
  await admin.destroy();
}
process.env.DATABASE_URL = serverUrl(name);
