// The tracking threads run track-worker.ts bundled to one JavaScript file, made here in the main
// thread by esbuild (which tsx brings). A thread started with `--import tsx` had its own esbuild
// helper process, spawned from that thread; when an idle thread ended, the helper exited but was
// never reaped (only the thread that spawns a child waits for it), so the server collected one
// defunct esbuild per thread per job. Here the one esbuild helper belongs to the main thread.
import { createHash } from "node:crypto";
import { mkdir, rename, writeFile } from "node:fs/promises";
import { existsSync } from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

const made = new Map<string, Promise<string>>();

/**
 * A worker entry's TypeScript source (`name`, e.g. "track-worker.ts"), bundled at the first job
 * so that it runs the same library code as the routes and the command line. A bundled server has
 * no copy beside this module: fall back to the source tree under the working directory. Callers
 * keep the name in a variable, so that the bundler does not take `new URL(…, import.meta.url)` for
 * an asset and copy the file away from its imports.
 */
export function workerSource(name: string): string {
  const beside = path.join(path.dirname(fileURLToPath(import.meta.url)), name);
  if (existsSync(beside)) return beside;
  const inSource = path.resolve(process.cwd(), "app/.server/tracking", name);
  if (existsSync(inSource)) return inSource;
  throw new Error(`The worker ${name} was not found at ${beside} or ${inSource}.`);
}

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
