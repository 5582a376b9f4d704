import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { databaseFree } from "../../scripts/database-free-tests.mjs";

// The files `npm test` runs in the SQLite pass only must really stay away from the database:
// follow every static and dynamic import (relative and ~/ paths) from each of them and from the
// programs they start, and fail on any path that reaches app/.server/db.
const root = path.resolve(import.meta.dirname, "../..");
const databaseModule = path.join(root, "app/.server/db") + path.sep;

function testFiles(dir: string): string[] {
  return fs.readdirSync(path.join(root, dir), { withFileTypes: true, recursive: true }).flatMap((e) => {
    if (!e.isFile() || !/\.test\.tsx?$/.test(e.name)) return [];
    return [path.relative(root, path.join(e.parentPath, e.name))];
  });
}
const allTests = [...testFiles("app"), ...testFiles("tests")];

/** The two shapes of glob the list uses: "folder/**" (everything under it) and an exact file. */
function matches(glob: string, file: string) {
  return glob.endsWith("/**") ? file.startsWith(glob.slice(0, -2)) : file === glob;
}

function resolveImport(from: string, spec: string): string | null {
  let base: string;
  if (spec.startsWith("~/")) base = path.join(root, "app", spec.slice(2));
  else if (spec.startsWith(".")) base = path.resolve(path.dirname(from), spec);
  else return null; // a package
  for (const candidate of [base, `${base}.ts`, `${base}.tsx`, `${base}.mjs`, `${base}.js`, path.join(base, "index.ts")]) {
    if (fs.existsSync(candidate) && fs.statSync(candidate).isFile()) return candidate;
  }
  // "./x.js" written for a .ts file
  const ts = base.replace(/\.js$/, ".ts");
  return fs.existsSync(ts) ? ts : null;
}

const importPattern = /(?:import|export)\s[^"'`;]*?from\s*["']([^"']+)["']|import\s*\(\s*["']([^"']+)["']\s*\)|import\s+["']([^"']+)["']/g;

/** The chain of files from start to the database module, or null when none leads there. */
function pathToDatabase(start: string): string[] | null {
  const seen = new Set<string>();
  const walk = (file: string, chain: string[]): string[] | null => {
    if (file.startsWith(databaseModule)) return [...chain, file];
    if (seen.has(file)) return null;
    seen.add(file);
    const text = fs.readFileSync(file, "utf8");
    for (const m of text.matchAll(importPattern)) {
      const spec = m[1] ?? m[2] ?? m[3];
      if (!spec) continue;
      const next = resolveImport(file, spec);
      if (!next) continue;
      const found = walk(next, [...chain, file]);
      if (found) return found;
    }
    return null;
  };
  return walk(path.join(root, start), []);
}

describe("the test files run on SQLite only", () => {
  it("every entry of the list matches a test file", () => {
    for (const entry of databaseFree)
      expect(
        allTests.some((f) => matches(entry.glob, f)),
        entry.glob,
      ).toBe(true);
  });

  it("none of them, nor the programs they start, imports the database module", () => {
    const offenders: string[] = [];
    for (const entry of databaseFree) {
      const starts = [...allTests.filter((f) => matches(entry.glob, f)), ...(entry.children ?? [])];
      for (const start of starts) {
        const chain = pathToDatabase(start);
        if (chain) offenders.push(chain.map((f) => path.relative(root, f)).join(" → "));
      }
    }
    expect(offenders).toEqual([]);
  });

  it("the import walk does find the database behind a test that uses it", () => {
    expect(pathToDatabase("app/.server/runs/current-check.test.ts")).not.toBeNull();
  });
});
