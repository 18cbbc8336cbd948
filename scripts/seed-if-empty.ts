// Loads the demo data into an empty database, or leaves an existing one alone.
// Usage: node --import tsx scripts/seed-if-empty.ts   (DATABASE_URL picks the database)
// Migrations are not run here: run them first (npm run db:migrate).
import knex from "knex";
import config from "../knexfile.ts";
import { seed, demoSeasonAnchor, DEMO_PASSWORD, DEMO_SIGN_INS } from "../seeds/demo.ts";

// Two starts at once must not both seed: the check and the seed share one transaction
// holding this advisory lock.
const LOCK_KEY = 724_117_2026;

async function main(): Promise<number> {
  const db = knex(config);
  try {
    const hasUsers = await db.schema.hasTable("users");
    if (!hasUsers) {
      console.error("seed-if-empty: table users does not exist; run the migrations first (npm run db:migrate)");
      return 1;
    }
    const outcome = await db.transaction(async (trx) => {
      await trx.raw("select pg_advisory_xact_lock(?)", [LOCK_KEY]);
      const [{ count }] = await trx("users").count<{ count: string | number }[]>({ count: "*" });
      if (Number(count) > 0) return { seeded: false, users: Number(count) };
      await seed(trx);
      return { seeded: true, users: 0 };
    });
    if (outcome.seeded) {
      console.log(`seed-if-empty: seeded demo data (season anchor ${demoSeasonAnchor()}).`);
      console.log(`  sign in as ${Object.values(DEMO_SIGN_INS).join(", ")} with password ${DEMO_PASSWORD}`);
    } else {
      console.log(`seed-if-empty: database already has ${outcome.users} users; reused existing data.`);
    }
    return 0;
  } finally {
    await db.destroy();
  }
}

main().then(
  (code) => {
    process.exitCode = code;
  },
  (error: unknown) => {
    console.error("seed-if-empty: failed:", error instanceof Error ? (error.stack ?? error.message) : error);
    process.exitCode = 1;
  },
);
