/**
 * The V8 option every process that decodes frames starts with (scripts/node-flags.mjs) is on the
 * commands that start them, this Node takes it, and a tracking thread starts beside it.
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { describe, expect, it } from "vitest";
import { serverNodeFlags } from "../../scripts/node-flags.mjs";

const root = path.resolve(import.meta.dirname, "../..");
const scripts = (JSON.parse(readFileSync(path.join(root, "package.json"), "utf8")) as { scripts: Record<string, string> }).scripts;

describe("the processes' V8 options", () => {
  it.each(["dev", "start", "worker", "analyze", "bench"])("npm run %s starts node with them", (name) => {
    const words = scripts[name]!.split(/\s+/);
    const node = words.findIndex((w) => w === "node" || w === "tsx");
    expect(node).toBeGreaterThanOrEqual(0);
    for (const flag of serverNodeFlags) expect(words.slice(node + 1)).toContain(flag);
  });

  it("are read back by a process started with them, whose tracking thread starts with the options worker-options.ts gives it", () => {
    const dir = mkdtempSync(path.join(os.tmpdir(), "tankside-flags-"));
    const program = path.join(dir, "start-thread.mts");
    const options = pathToFileURL(path.join(root, "app/.server/tracking/worker-options.ts")).href;
    writeFileSync(
      program,
      `import { Worker } from "node:worker_threads";
       import { workerExecArgv } from ${JSON.stringify(options)};
       const thread = new Worker("require('node:worker_threads').parentPort.postMessage('started')", { eval: true, execArgv: workerExecArgv() });
       thread.on("message", (m) => { console.log(JSON.stringify({ execArgv: process.execArgv, given: workerExecArgv() ?? null, thread: m })); void thread.terminate(); });
       thread.on("error", (e) => { console.error(e.message); process.exit(1); });`,
    );
    const child = spawnSync(process.execPath, [...serverNodeFlags, "--import", "tsx", program], { cwd: root, encoding: "utf8" });
    rmSync(dir, { recursive: true, force: true });
    expect(child.stderr).toBe("");
    expect(child.status).toBe(0);
    const seen = JSON.parse(child.stdout.trim()) as { execArgv: string[]; given: string[] | null; thread: string };
    for (const flag of serverNodeFlags) expect(seen.execArgv).toContain(flag);
    // tsx's loader and the heap size left out, so the thread neither loads tsx again nor refuses to start.
    expect(seen.given).toEqual([]);
    expect(seen.thread).toBe("started");
  });
});
