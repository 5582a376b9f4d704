// What `npm run demo` decides before it starts the server: whether the build is current, and the
// demo's session secret. Apart from demo.mjs so the unit tests can call it.
import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";

/** Everything `react-router build` reads: a change to any of them makes the next demo start build again. */
const buildInputs = ["app", "public", "tailwind.css", "vite.config.ts", "react-router.config.ts", "tsconfig.json", "package.json", "package-lock.json"];
const stampName = ".tankside-sources";

function* files(root, relative) {
  const full = path.join(root, relative);
  if (!fs.existsSync(full)) return;
  if (!fs.statSync(full).isDirectory()) {
    yield relative;
    return;
  }
  for (const entry of fs.readdirSync(full, { withFileTypes: true }).sort((a, b) => a.name.localeCompare(b.name))) {
    const child = path.join(relative, entry.name);
    // Tests are never part of the build.
    if (entry.isFile() && /\.test\.tsx?$/.test(entry.name)) continue;
    if (entry.isDirectory() || entry.isFile()) yield* files(root, child);
  }
}

/** A digest of the build's inputs: their names and contents (not their times, which a checkout changes). */
export function sourcesDigest(root) {
  const hash = crypto.createHash("sha256");
  for (const input of buildInputs) {
    for (const file of files(root, input)) {
      hash.update(`${file}\0`);
      hash.update(fs.readFileSync(path.join(root, file)));
      hash.update("\0");
    }
  }
  return hash.digest("hex");
}

/** True when `buildDir` holds a server build made from the sources as they are now. */
export function buildIsCurrent(root, buildDir) {
  try {
    if (!fs.existsSync(path.join(buildDir, "server/index.js"))) return false;
    return fs.readFileSync(path.join(buildDir, stampName), "utf8").trim() === sourcesDigest(root);
  } catch {
    return false;
  }
}

/** Notes which sources the build in `buildDir` was made from. */
export function recordBuild(root, buildDir) {
  fs.writeFileSync(path.join(buildDir, stampName), `${sourcesDigest(root)}\n`);
}

/** The file of a `sqlite:` DATABASE_URL, or null for another kind of database. */
export function sqliteFileOf(databaseUrl) {
  const match = /^sqlite:(?:\/\/)?(.+)$/.exec(databaseUrl);
  return match?.[1] ? path.resolve(match[1]) : null;
}

/**
 * The demo's session secret, kept in `file` (readable by its owner only) so that a restart keeps
 * people signed in. Made on the first start; a file that is too short is replaced.
 */
export function demoSessionSecret(file) {
  try {
    const secret = fs.readFileSync(file, "utf8").trim();
    if (/^[0-9a-f]{64}$/.test(secret)) {
      if ((fs.statSync(file).mode & 0o077) !== 0) fs.chmodSync(file, 0o600);
      return secret;
    }
  } catch (err) {
    if (err.code !== "ENOENT") throw err;
  }
  const secret = crypto.randomBytes(32).toString("hex");
  fs.mkdirSync(path.dirname(file), { recursive: true });
  fs.rmSync(file, { force: true });
  fs.writeFileSync(file, `${secret}\n`, { mode: 0o600, flag: "wx" });
  return secret;
}
