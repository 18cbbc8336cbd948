import { defineConfig } from "vitest/config";

// Two projects: pure unit tests, and integration tests against the project's own
// PostgreSQL (one database per worker, cloned from a migrated template).
export default defineConfig({
  resolve: { tsconfigPaths: true },
  test: {
    projects: [
      {
        extends: true,
        // The planner's benchmark-instance tests compute for seconds; a shared machine under
        // load must not fail them on time (speed is measured by the bench:* scripts instead).
        test: { name: "unit", include: ["tests/unit/**/*.test.ts"], testTimeout: 60_000 },
      },
      {
        extends: true,
        test: {
          name: "integration",
          include: ["tests/integration/**/*.test.ts"],
          globalSetup: ["tests/integration/global-setup.ts"],
          setupFiles: ["tests/integration/worker-database.ts"],
          testTimeout: 60_000,
          hookTimeout: 120_000,
          pool: "forks",
        },
      },
    ],
  },
});
