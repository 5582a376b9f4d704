// The tracking threads run track-worker.ts bundled to one JavaScript file, made here in the main
// thread by esbuild (which tsx brings). A thread started with `--import tsx` had its own esbuild
// helper process, spawned from that thread; when an idle thread ended, the helper exited but was
// never reaped (only the thread that spawns a child waits for it), so the server collected one
// defunct esbuild per thread per job. Here the one esbuild helper belongs to the main thread.
import { createHash } from "node:crypto";
import { mkdir, rename, writeFile } from "node:fs/promises";
import { existsSync } from "node:fs";
import path from "node:path";

const made = new Map<string, Promise<string>>();

/**
 * The bundle of the worker at `source`, written under the project's node_modules/.cache (so the
 * packages it imports, left outside the bundle, resolve from the project) and named by its content,
 * so processes that make it at the same time write the same file.
 */
export function bundledWorker(source: string): Promise<string> {
  let file = made.get(source);
  if (!file) {
    file = bundle(source);
    made.set(source, file);
    file.catch(() => made.delete(source));
  }
  return file;
}

async function bundle(source: string): Promise<string> {
  const { build } = await import("esbuild");
  const result = await build({
    entryPoints: [source],
    bundle: true,
    platform: "node",
    format: "esm",
    target: "node20",
    packages: "external",
    sourcemap: "inline",
    write: false,
    logLevel: "silent",
  });
  const code = result.outputFiles[0]?.contents;
  if (!code) throw new Error(`esbuild made no output for ${source}.`);
  const digest = createHash("sha256").update(code).digest("hex").slice(0, 16);
  const dir = path.resolve(process.cwd(), "node_modules/.cache/tankside");
  const file = path.join(dir, `${path.basename(source, ".ts")}-${digest}.mjs`);
  if (existsSync(file)) return file;
  await mkdir(dir, { recursive: true });
  const partial = `${file}.${process.pid}.${Date.now()}.tmp`;
  await writeFile(partial, code);
  await rename(partial, file);
  return file;
}
