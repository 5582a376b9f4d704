import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import { describe, expect, it } from "vitest";

// The throw-away PostgreSQL cluster of `npm test` (scripts/pg-cluster.mjs) must start even when a
// killed run left its folder behind with a postmaster.pid naming a process that is gone: trusting
// that file once made the whole PostgreSQL pass fail with ECONNREFUSED.
const hasPostgres =
  fs.existsSync("/usr/lib/postgresql") && fs.readdirSync("/usr/lib/postgresql").some((v) => fs.existsSync(`/usr/lib/postgresql/${v}/bin/initdb`));
const port = 54391; // apart from the suite's own cluster (54329) and the helpers' ports
const dir = path.join(os.tmpdir(), `tankside-pg-${port}`);
const cluster = (verb: string) =>
  spawnSync(process.execPath, ["scripts/pg-cluster.mjs", verb], { encoding: "utf8", env: { ...process.env, TANKSIDE_PG_PORT: String(port) } });

// Database-independent, so it runs once: in the SQLite pass.
describe.skipIf(!hasPostgres || !!process.env.TEST_DATABASE_URL)("the test cluster script", () => {
  it("starts afresh over a folder a killed run left behind, and stop removes it", async () => {
    cluster("stop");
    fs.mkdirSync(path.join(dir, "data"), { recursive: true });
    // No process has this PID: Linux's pid_max is at most 2^22.
    fs.writeFileSync(path.join(dir, "data", "postmaster.pid"), "4194305\n");
    if (process.getuid?.() === 0) spawnSync("chown", ["-R", "postgres:postgres", dir]);

    const started = cluster("start");
    expect(started.status, started.stderr).toBe(0);
    const url = started.stdout.trim();
    expect(url).toBe(`postgres://postgres@127.0.0.1:${port}/postgres`);
    const client = new pg.Client({ connectionString: url });
    try {
      await client.connect();
      const r = await client.query<{ n: number }>("select 41 + 1 as n");
      expect(r.rows[0]?.n).toBe(42);
    } finally {
      await client.end().catch(() => undefined);
      const stopped = cluster("stop");
      expect(stopped.status, stopped.stderr).toBe(0);
    }
    expect(fs.existsSync(dir)).toBe(false);
  });
});
