// Times the forgot-password action for an address with an active account and for an unknown one,
// N times each in random order, in a booted server process (fake SMTP and background tasks
// running) on a scratch database. Prints one JSON line: medians, and a Mann–Whitney U comparison
// of the two samples (p near 1 and a probability of superiority near 0.5 mean the times do not
// tell the two apart). `npm run bench:forgot [-- N]`.
//
// `npm run bench:forgot -- N --url http://127.0.0.1:3000 --real someone@lab.example` times the same
// over HTTP against a running server instead (the address must belong to an active account there).
import os from "node:os";
import path from "node:path";
import fs from "node:fs";
import { errorFunction, median } from "simple-statistics";

const scratch = path.join(os.tmpdir(), `tankside-bench-forgot-${process.pid}.sqlite`);
process.env.DATABASE_URL = `sqlite:${scratch}`;
process.env.SESSION_SECRET ??= "bench-session-secret-0123456789";
process.env.UPLOADS_DIR = path.join(os.tmpdir(), `tankside-bench-forgot-uploads-${process.pid}`);
delete process.env.SMTP_URL;

const args = process.argv.slice(2);
const flag = (name: string) => {
  const i = args.indexOf(name);
  return i >= 0 ? args[i + 1] : undefined;
};
const N = Number(args.find((a) => /^\d+$/.test(a)) ?? 200);
const serverUrl = flag("--url");
const WARM_UP = 10;
const REAL = flag("--real") ?? "bench-real@tankside.example";
const UNKNOWN = "bench-nobody@tankside.example";

/** Mann–Whitney U with mid-ranks for ties and the normal approximation (fine for n ≥ 20; common practice). */
function mannWhitney(a: number[], b: number[]) {
  const all = [...a.map((v) => ({ v, g: 0 })), ...b.map((v) => ({ v, g: 1 }))].sort((x, y) => x.v - y.v);
  const ranks = new Array<number>(all.length);
  for (let i = 0; i < all.length;) {
    let j = i;
    while (j + 1 < all.length && all[j + 1]!.v === all[i]!.v) j++;
    for (let k = i; k <= j; k++) ranks[k] = (i + j) / 2 + 1;
    i = j + 1;
  }
  const rankSumA = all.reduce((s, x, i) => (x.g === 0 ? s + ranks[i]! : s), 0);
  const n1 = a.length;
  const n2 = b.length;
  const u = rankSumA - (n1 * (n1 + 1)) / 2;
  const z = (u - (n1 * n2) / 2) / Math.sqrt((n1 * n2 * (n1 + n2 + 1)) / 12);
  const p = 1 - errorFunction(Math.abs(z) / Math.SQRT2);
  return { u, z, p, probabilityRealSlower: u / (n1 * n2) };
}

type Ask = (email: string) => Promise<{ ms: number; body: string }>;

async function overHttp(base: string): Promise<Ask> {
  return async (email) => {
    const t0 = performance.now();
    const res = await fetch(`${base}/forgot-password`, { method: "POST", body: new URLSearchParams({ email }), headers: { Origin: base }, redirect: "manual" });
    const body = await res.text();
    const ms = performance.now() - t0;
    // The form echoes nothing of the address back after success; the page is otherwise identical but for the CSP nonce.
    return { ms, body: `${res.status} ${body.replace(/nonce="[^"]*"/g, "").replace(/"nonce":"[^"]*"/g, "").length}` };
  };
}

async function main() {
  if (serverUrl) return compare(await overHttp(serverUrl.replace(/\/$/, "")), async () => undefined);
  const { passwordResetsSettled } = await import("../app/.server/people");
  // Imported after DATABASE_URL is set: the db module picks its database when first loaded.
  const { User, sequelize } = await import("../app/.server/db");
  await import("../app/.server/features");
  const { boot, shutdown } = await import("../app/.server/boot");
  const { hashPassword } = await import("../app/.server/auth/password");
  const { action } = await import("../app/routes/auth/forgot-password");
  await boot();
  await User.create({
    email: REAL,
    name: "Bench Person",
    role: "technician",
    passwordHash: await hashPassword("a long bench password"),
    passwordChangedAt: new Date(),
  });

  const ask: Ask = async (email) => {
    const request = new Request("http://localhost/forgot-password", { method: "POST", body: new URLSearchParams({ email }) });
    const t0 = performance.now();
    const result = await action({ request, params: {}, context: {} } as never);
    const ms = performance.now() - t0;
    return { ms, body: JSON.stringify(result) };
  };
  await compare(
    ask,
    async () => {
      await shutdown();
      await sequelize.close().catch(() => undefined);
      fs.rmSync(scratch, { force: true });
      fs.rmSync(`${scratch}-wal`, { force: true });
      fs.rmSync(`${scratch}-shm`, { force: true });
    },
    passwordResetsSettled,
  );
}

async function compare(ask: Ask, done: () => Promise<void>, settle: () => Promise<void> = async () => undefined) {
  for (let i = 0; i < WARM_UP; i++) {
    await ask(REAL);
    await ask(UNKNOWN);
  }
  const real: number[] = [];
  const unknown: number[] = [];
  const bodies = new Set<string>();
  for (let i = 0; i < N; i++) {
    // Random order within each pair, so drift and any after-effect of one request fall on both kinds alike.
    const order = Math.random() < 0.5 ? [REAL, UNKNOWN] : [UNKNOWN, REAL];
    for (const email of order) {
      const { ms, body } = await ask(email);
      (email === REAL ? real : unknown).push(ms);
      bodies.add(body);
    }
    // In-process, let the deferred link writes finish between pairs, as the pause between a
    // person's requests would: back-to-back they pile up and contend for SQLite's write lock.
    await settle();
  }
  const test = mannWhitney(real, unknown);
  const round = (x: number, d = 3) => Number(x.toFixed(d));
  console.log(
    JSON.stringify({
      bench: "forgot-password",
      via: serverUrl ? "http" : "action",
      n: N,
      realMedianMs: round(median(real)),
      unknownMedianMs: round(median(unknown)),
      medianDifferenceMs: round(median(real) - median(unknown)),
      mannWhitneyU: test.u,
      z: round(test.z),
      p: round(test.p, 4),
      probabilityRealSlower: round(test.probabilityRealSlower),
      distinctResponseBodies: bodies.size,
    }),
  );
  await done();
}

main().then(
  () => process.exit(0),
  (err) => {
    console.error(err);
    process.exit(1);
  },
);
