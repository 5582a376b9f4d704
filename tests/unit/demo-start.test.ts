import { afterAll, describe, expect, it } from "vitest";
import { spawn } from "node:child_process";
import fs from "node:fs";
import http from "node:http";
import net from "node:net";
import os from "node:os";
import path from "node:path";
// @ts-expect-error plain ESM module of the demo script, without type declarations
import { buildIsCurrent, demoSessionSecret, recordBuild, sourcesDigest, sqliteFileOf } from "../../scripts/demo-support.mjs";

const root = path.resolve(import.meta.dirname, "../..");
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), "tankside-demo-start-"));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

describe("the demo's session secret", () => {
  it("is made once, readable by its owner only, and the same at the next start", () => {
    const file = path.join(tmp, "a", "demo.sqlite.demo-secret");
    const first = demoSessionSecret(file) as string;
    expect(first).toMatch(/^[0-9a-f]{64}$/);
    expect(fs.statSync(file).mode & 0o777).toBe(0o600);
    expect(demoSessionSecret(file)).toBe(first);
  });

  it("tightens a file others could read, and replaces one that holds no secret", () => {
    const file = path.join(tmp, "b.demo-secret");
    const secret = "ab".repeat(32);
    fs.writeFileSync(file, `${secret}\n`, { mode: 0o644 });
    fs.chmodSync(file, 0o644);
    expect(demoSessionSecret(file)).toBe(secret);
    expect(fs.statSync(file).mode & 0o777).toBe(0o600);
    fs.writeFileSync(file, "short");
    const replaced = demoSessionSecret(file) as string;
    expect(replaced).toMatch(/^[0-9a-f]{64}$/);
    expect(fs.readFileSync(file, "utf8").trim()).toBe(replaced);
  });

  it("lives beside a SQLite database", () => {
    expect(sqliteFileOf("sqlite:/var/lab/tankside.sqlite")).toBe("/var/lab/tankside.sqlite");
    expect(sqliteFileOf("sqlite:///var/lab/tankside.sqlite")).toBe("/var/lab/tankside.sqlite");
    expect(sqliteFileOf("postgres://u:p@db/tankside")).toBeNull();
  });
});

describe("whether the demo builds again", () => {
  it("builds when a source changed since the recorded build, and not otherwise", () => {
    const project = path.join(tmp, "project");
    const buildDir = path.join(project, "build");
    fs.mkdirSync(path.join(project, "app/routes"), { recursive: true });
    fs.mkdirSync(path.join(buildDir, "server"), { recursive: true });
    fs.writeFileSync(path.join(project, "app/routes/home.tsx"), "export default 1;\n");
    fs.writeFileSync(path.join(buildDir, "server/index.js"), "");
    expect(buildIsCurrent(project, buildDir)).toBe(false);
    recordBuild(project, buildDir);
    expect(buildIsCurrent(project, buildDir)).toBe(true);
    // A test file is not part of the build.
    fs.writeFileSync(path.join(project, "app/routes/home.test.ts"), "// a test\n");
    expect(buildIsCurrent(project, buildDir)).toBe(true);
    const before = sourcesDigest(project) as string;
    fs.writeFileSync(path.join(project, "app/routes/home.tsx"), "export default 2;\n");
    expect(sourcesDigest(project)).not.toBe(before);
    expect(buildIsCurrent(project, buildDir)).toBe(false);
  });
});

function freePort(): Promise<number> {
  return new Promise((resolve) => {
    const s = net.createServer().listen(0, "127.0.0.1", () => {
      const { port } = s.address() as net.AddressInfo;
      s.close(() => resolve(port));
    });
  });
}

function get(port: number): Promise<{ status: number; retryAfter?: string; body: string } | "refused"> {
  return new Promise((resolve) => {
    http
      .get({ host: "127.0.0.1", port, path: "/" }, (res) => {
        let body = "";
        res.setEncoding("utf8");
        res.on("data", (c: string) => (body += c));
        res.on("end", () => resolve({ status: res.statusCode ?? 0, retryAfter: res.headers["retry-after"], body }));
      })
      .on("error", () => resolve("refused"));
  });
}

/** Every process below `pid`, from /proc. */
function descendants(pid: number): { pid: number; cmd: string }[] {
  const parent = new Map<number, number>();
  for (const entry of fs.readdirSync("/proc")) {
    if (!/^\d+$/.test(entry)) continue;
    try {
      const stat = fs.readFileSync(`/proc/${entry}/stat`, "utf8");
      parent.set(Number(entry), Number(stat.slice(stat.lastIndexOf(")") + 2).split(" ")[1]));
    } catch {
      // Gone meanwhile.
    }
  }
  const found: { pid: number; cmd: string }[] = [];
  const below = (p: number) => {
    for (const [child, ppid] of parent) {
      if (ppid !== p) continue;
      let cmd = "";
      try {
        cmd = fs.readFileSync(`/proc/${child}/cmdline`, "utf8").replace(/\0/g, " ").trim();
      } catch {
        // Gone meanwhile.
      }
      found.push({ pid: child, cmd });
      below(child);
    }
  };
  below(pid);
  return found;
}

const alive = (pid: number) => {
  try {
    const state = fs.readFileSync(`/proc/${pid}/stat`, "utf8");
    return state.slice(state.lastIndexOf(")") + 2, state.lastIndexOf(")") + 3) !== "Z";
  } catch {
    return false;
  }
};

describe("npm run demo", () => {
  for (const signal of ["SIGTERM", "SIGINT"] as const) {
    it(`answers "getting ready" (503, Retry-After) at once, and a ${signal} to npm stops it and everything it started`, async () => {
      const port = await freePort();
      const buildDir = `build-demo-start-${process.pid}-${signal}`;
      const dataDir = path.join(tmp, `data-${signal}`);
      fs.mkdirSync(dataDir, { recursive: true });
      const npm = spawn("npm", ["run", "demo"], {
        cwd: root,
        env: { ...process.env, PORT: String(port), HOST: "127.0.0.1", DATABASE_URL: `sqlite:${dataDir}/demo.sqlite`, TANKSIDE_BUILD_DIR: buildDir },
        stdio: ["ignore", fs.openSync(path.join(dataDir, "demo.log"), "w"), "inherit"],
      });
      const exited = new Promise((resolve) => npm.on("exit", resolve));
      let started: { pid: number; cmd: string }[] = [];
      try {
        // No build in that folder yet, so the demo builds first while the port says it is getting ready.
        await expect.poll(() => get(port), { timeout: 30_000, interval: 200 }).toMatchObject({ status: 503 });
        const answer = await get(port);
        if (answer === "refused") throw new Error("the port stopped answering");
        expect(answer.retryAfter).toMatch(/^\d+$/);
        expect(answer.body).toContain("Tankside is getting ready");
        await expect.poll(() => descendants(npm.pid!).some((p) => p.cmd.includes("react-router")), { timeout: 30_000, interval: 200 }).toBe(true);
        started = descendants(npm.pid!);
        expect(started.every((p) => alive(p.pid))).toBe(true);
        npm.kill(signal);
        await exited;
        // Stopping takes a moment; a build left running would take far longer than this to end by itself.
        await expect.poll(() => started.filter((p) => alive(p.pid)).map((p) => p.cmd), { timeout: 8_000, interval: 200 }).toEqual([]);
        expect(await get(port)).toBe("refused");
      } finally {
        for (const p of [...started, ...descendants(npm.pid!)].filter((p) => alive(p.pid))) process.kill(p.pid, "SIGKILL");
        npm.kill("SIGKILL");
        fs.rmSync(path.join(root, buildDir), { recursive: true, force: true });
      }
    }, 90_000);
  }
});
