import { execFileSync } from "node:child_process";
import { chmodSync, copyFileSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join, resolve } from "node:path";
import { afterAll, describe, expect, it } from "vitest";

// `npm start` and `npm test` from a clone in a folder the database server's user cannot
// enter: as root the server runs as the postgres user, and a clone under /root (mode 700)
// is out of its reach. The scripts must then keep the cluster somewhere it can reach.
// The test copies the set-up scripts into such a folder and starts a throwaway cluster
// there on its own port with the same functions `npm start` uses.

const PROJECT = resolve(__dirname, "../..");
const isRoot = process.getuid?.() === 0;
const PORT = "54391";

const home = mkdtempSync(join(tmpdir(), "varroute-home-"));
const project = join(home, "clone", "varroute");
let pgRoot = "";

afterAll(() => {
  // Stop the throwaway cluster if the test left it running, then remove its folders.
  if (pgRoot) {
    try {
      execFileSync("sh", ["scripts/pg.sh", "stop"], { cwd: project, env: { ...process.env, PG_ROOT: pgRoot, PG_PORT: PORT }, stdio: "ignore" });
    } catch {
      // not running
    }
    rmSync(pgRoot, { recursive: true, force: true });
  }
  rmSync(home, { recursive: true, force: true });
});

describe("the set-up scripts in a private home folder", () => {
  it("start PostgreSQL with its data where the server can reach it, and stop it again", () => {
    mkdirSync(join(project, "scripts"), { recursive: true });
    for (const script of ["lib.sh", "pg.sh", "pg-root.sh"]) copyFileSync(join(PROJECT, "scripts", script), join(project, "scripts", script));
    writeFileSync(
      join(project, "scripts", "check-pg.sh"),
      ['. "$(dirname "$0")/lib.sh"', "start_postgres", 'psql_admin -d postgres -c "select 42"', 'echo "PG_ROOT=$PG_ROOT"', "stop_services", ""].join("\n"),
    );
    // Like /root: nobody but the owner may enter.
    chmodSync(home, 0o700);

    const out = execFileSync("sh", ["scripts/check-pg.sh"], {
      cwd: project,
      env: { ...process.env, PG_PORT: PORT, PG_ROOT: "", NO_COLOR: "1" },
      encoding: "utf8",
      timeout: 120_000,
    });
    pgRoot = /PG_ROOT=(.+)/.exec(out)?.[1]?.trim() ?? "";
    expect(out).toContain("42"); // the server answered a query
    expect(out).toContain("PostgreSQL stopped");
    if (isRoot) {
      // The postgres user cannot enter the clone, so the cluster lives outside it.
      expect(pgRoot.startsWith(home)).toBe(false);
      expect(pgRoot).toMatch(/\/varroute\/pg-[0-9a-f]{16}$/);
    } else {
      // The server runs as this user, who can enter the folder: the project's own .pg/.
      expect(pgRoot).toBe(join(project, ".pg"));
    }
  });

  it("choose the project's own .pg/ for a clone the server can reach, and a fixed folder per clone otherwise", () => {
    const open = join(tmpdir(), `varroute-open-${process.pid}`);
    mkdirSync(open, { recursive: true, mode: 0o755 });
    chmodSync(open, 0o755);
    try {
      const reachable = execFileSync("sh", [join(PROJECT, "scripts/pg-root.sh"), open], { env: { ...process.env, PG_ROOT: "" }, encoding: "utf8" }).trim();
      expect(reachable).toBe(join(open, ".pg"));
    } finally {
      rmSync(open, { recursive: true, force: true });
    }
    const first = execFileSync("sh", [join(PROJECT, "scripts/pg-root.sh"), project], { env: { ...process.env, PG_ROOT: "" }, encoding: "utf8" }).trim();
    const again = execFileSync("sh", [join(PROJECT, "scripts/pg-root.sh"), project], { env: { ...process.env, PG_ROOT: "" }, encoding: "utf8" }).trim();
    expect(again).toBe(first); // the same clone keeps its data across starts
    const given = execFileSync("sh", [join(PROJECT, "scripts/pg-root.sh"), project], { env: { ...process.env, PG_ROOT: "/srv/pg" }, encoding: "utf8" }).trim();
    expect(given).toBe("/srv/pg");
  });
});
