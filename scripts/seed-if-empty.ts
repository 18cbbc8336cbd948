// Loads the demo data into an empty database, or leaves an existing one alone.
// Usage: node --import tsx scripts/seed-if-empty.ts   (DATABASE_URL picks the database)
// VARROUTE_DEMO=0 leaves an empty database empty: the first visit to the app then leads to
// the setup page (APP_URL/setup), where a business of its own makes its owner account.
// Unset or 1: the demo. Migrations are not run here: run them first (npm run db:migrate).
import knex from "knex";
import config from "../knexfile.ts";
import { seed, demoSeasonAnchor, DEMO_PASSWORD, DEMO_SIGN_INS } from "../seeds/demo.ts";

// Two starts at once must not both seed: the check and the seed share one transaction
// holding this advisory lock. The setup page (app/models/setup.server.ts) takes the same
// lock, so a demo seed and a setup never both fill one database.
const LOCK_KEY = 724_117_2026;

/** Whether to load the demo: VARROUTE_DEMO unset, empty or 1 means yes, 0 means no. */
function wantsDemo(value: string | undefined): boolean | null {
  if (value === undefined || value === "" || value === "1") return true;
  if (value === "0") return false;
  return null;
}

function setupUrl(): string {
  const appUrl = (process.env.APP_URL ?? `http://${process.env.HOST ?? "127.0.0.1"}:${process.env.PORT ?? "3000"}`).replace(/\/+$/, "");
  return `${appUrl}/setup`;
}

async function main(): Promise<number> {
  const demo = wantsDemo(process.env.VARROUTE_DEMO);
  if (demo === null) {
    console.error(`seed-if-empty: VARROUTE_DEMO must be 0 (no demo: set up your own business) or 1 (the demo), not "${process.env.VARROUTE_DEMO}"`);
    return 1;
  }
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
      if (Number(count) > 0 || !demo) {
        const demoOwner = await trx("users").where({ email: DEMO_SIGN_INS.owner }).first("id");
        return { seeded: false, users: Number(count), holdsDemo: Boolean(demoOwner) };
      }
      await seed(trx);
      return { seeded: true, users: 0, holdsDemo: true };
    });
    if (outcome.seeded) {
      console.log(`seed-if-empty: seeded demo data (season anchor ${demoSeasonAnchor()}).`);
      console.log(`  sign in as ${Object.values(DEMO_SIGN_INS).join(", ")} with password ${DEMO_PASSWORD}`);
    } else if (outcome.users === 0) {
      console.log("seed-if-empty: VARROUTE_DEMO=0, so the database stays empty (no demo data).");
      console.log(`  The first visit leads to the setup page at ${setupUrl()}: your business, the owner account, the depot, product and prices.`);
    } else {
      console.log(`seed-if-empty: database already has ${outcome.users} users; reused existing data.`);
      if (!demo && outcome.holdsDemo) {
        console.log("  This database holds the demo. For a business of your own, start on a fresh database, e.g. VARROUTE_DEMO=0 VARROUTE_DB=mybusiness npm start.");
      }
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
