// Seeds 20 000 runs into a scratch database and times the runs-table path and GET /api/v1/runs
// for filtered, sorted pages. Indexes, not caches: every call goes to the database — a scratch
// SQLite file, or with TEST_DATABASE_URL=postgres://… (npm run bench:runs:pg) a fresh PostgreSQL database.
import os from "node:os";
import path from "node:path";
import fs from "node:fs";
import { quantile } from "simple-statistics";
import { freshDatabaseUrl, onPostgres } from "../tests/setup/test-database.mjs";

const scratchDir = os.tmpdir();
const scratchLabel = `bench_runs_${process.pid}`;
process.env.DATABASE_URL = await freshDatabaseUrl(scratchLabel, scratchDir);
const scratch = path.join(scratchDir, `${scratchLabel}.sqlite`);
process.env.SESSION_SECRET ??= "bench-session-secret-0123456789";
process.env.UPLOADS_DIR ??= path.join(os.tmpdir(), `tankside-bench-uploads-${process.pid}`);

const RUNS = 20_000;
const ROUNDS = 60;

async function main() {
  // Imported after DATABASE_URL is set: the db module picks its database when first loaded.
  const { migrate, Run, sequelize } = await import("../app/.server/db");
  const { seedRunLab } = await import("../app/.server/runs/testing");
  const { createApiToken } = await import("../app/.server/auth/api-tokens");
  const { getSession, sessionStorage } = await import("../app/.server/auth/session");
  const { loader: pageLoader } = await import("../app/routes/runs/rows");
  const { loader: listPageLoader } = await import("../app/routes/runs/list");
  const { loader: apiLoader } = await import("../app/routes/api/runs");

  await migrate();
  const lab = await seedRunLab();
  const tables = [lab.tableA.id, lab.tableB.id];
  const technicians = [lab.technician.id, lab.technician2.id, lab.manager.id];
  const states = ["draft", "frames_in", "tracked", "checked", "signed_off"] as const;
  const verdicts = ["agrees", "agrees", "disagrees", "inconclusive"] as const;
  const words = ["inertial circle", "dye spiral", "spin-up", "Taylor column", "float release", "Ekman layer", "demonstration", "calibration check"];
  const start = Date.UTC(2021, 0, 1);

  const t0 = performance.now();
  for (let chunk = 0; chunk < RUNS; chunk += 1000) {
    const rows = [];
    for (let i = chunk; i < Math.min(RUNS, chunk + 1000); i++) {
      const state = states[i % states.length]!;
      const checked = state === "checked" || state === "signed_off";
      const at = new Date(start + i * 2.7 * 3600_000);
      rows.push({
        state,
        tableId: tables[i % 2]!,
        tankId: lab.tank.id,
        cameraId: lab.camera.id,
        setRateRpm: 4 + (i % 23),
        direction: i % 4 === 0 ? ("cw" as const) : ("ccw" as const),
        waterDepthM: 0.05 + (i % 10) / 100,
        waterTemperatureC: 18 + (i % 7),
        rateReachedAt: at,
        cameraMode: i % 3 === 0 ? ("lab" as const) : ("rotating" as const),
        frameRateFps: 30,
        tracer: i % 5 === 0 ? ("dye" as const) : ("float" as const),
        purpose: `${words[i % words.length]} run ${i}`,
        notes: i % 9 === 0 ? `Repeated with ${words[(i + 3) % words.length]}` : null,
        technicianId: technicians[i % 3]!,
        supersedesId: null,
        signedOffById: state === "signed_off" ? lab.manager.id : null,
        signedOffAt: state === "signed_off" ? at : null,
        calibrationsInForce: "[]",
        verdict: checked ? verdicts[i % verdicts.length] : null,
        frameCount: state === "draft" ? 0 : 240,
        frameWidthPx: 1280,
        frameHeightPx: 720,
        createdAt: at,
        updatedAt: at,
      });
    }
    await Run.bulkCreate(rows);
  }
  await sequelize.query("ANALYZE");
  console.log(`seeded ${await Run.count()} runs in ${((performance.now() - t0) / 1000).toFixed(1)} s (${onPostgres ? "PostgreSQL" : scratch})`);

  const { token } = await createApiToken(lab.technician.id, "bench");
  const session = await getSession(new Request("http://localhost/"));
  session.set("userId", lab.technician.id);
  const cookie = (await sessionStorage.commitSession(session)).split(";")[0]!;

  const cases = [
    { name: "table + state, newest first, page 3", query: `table=${lab.tableB.id}&state=checked&page=3` },
    { name: "verdict + date range, by set rate", query: "verdict=disagrees&from=2022-01-01&to=2024-12-31&sort=setRateRpm&dir=asc&page=2" },
    { name: "technician, oldest first, page 40 of 50-row pages", query: `technician=${lab.technician2.id}&dir=asc&pageSize=50&page=40` },
    { name: "text in purpose/notes + state, by depth", query: "q=taylor&state=signed_off&sort=waterDepthM&dir=desc" },
  ];

  type Loader = (args: never) => unknown;
  const time = async (fn: Loader, url: string, headers: Record<string, string>) => {
    const times: number[] = [];
    for (let i = 0; i < ROUNDS + 5; i++) {
      const request = new Request(url, { headers });
      const s = performance.now();
      const result = await fn({ request, params: {}, context: {} } as never);
      const ms = performance.now() - s;
      if (result instanceof Response && result.status !== 200) throw new Error(`${url}: ${result.status} ${await result.text()}`);
      if (i >= 5) times.push(ms); // the first calls warm SQLite's page cache and the statement paths
    }
    return { p50: quantile(times, 0.5), p95: quantile(times, 0.95) };
  };

  const rows: string[] = [];
  let worst = 0;
  for (const c of cases) {
    const table = await time(pageLoader, `http://localhost/runs/rows?${c.query}`, { Cookie: cookie });
    const page = await time(listPageLoader, `http://localhost/runs?${c.query}`, { Cookie: cookie });
    const api = await time(apiLoader, `http://localhost/api/v1/runs?${c.query}`, { Authorization: `Bearer ${token}` });
    worst = Math.max(worst, table.p95, page.p95, api.p95);
    const f = (x: number) => x.toFixed(1).padStart(6);
    rows.push(`${c.name.padEnd(52)} rows ${f(table.p50)} ${f(table.p95)} | page ${f(page.p50)} ${f(page.p95)} | api ${f(api.p50)} ${f(api.p95)}`);
  }
  console.log(`\n${ROUNDS} timed calls each, ms (median, p95)`);
  console.log(`${"".padEnd(52)} runs-table data | runs page loader | GET /api/v1/runs`);
  for (const r of rows) console.log(r);
  console.log(`\n${onPostgres ? "PostgreSQL" : "SQLite"}: worst p95 ${worst.toFixed(1)} ms — target < 50 ms: ${worst < 50 ? "met" : "NOT met"}`);

  await sequelize.close();
  if (!onPostgres) for (const suffix of ["", "-wal", "-shm"]) fs.rmSync(scratch + suffix, { force: true });
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});
