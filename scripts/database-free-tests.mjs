// Test files that never open a database: `npm test` runs them in the SQLite pass only, since the
// PostgreSQL pass would repeat them unchanged (scripts/test-all.mjs). tests/unit/database-free.test.ts
// follows every import of every file matched here (and of the programs they start, `children`) and
// fails if one reaches the database module, so a test that starts using the database cannot stay
// on this list by mistake.
export const databaseFree = [
  // The pure library: no server module at all (DEVELOPERS.md, layout).
  { glob: "app/lib/**", why: "the pure library" },
  // Tracking and the theory check on rendered stacks: frames on disk, the tracking pool, no run rows.
  { glob: "app/.server/tracking/track-frame-stack.test.ts", why: "tracking on frame stacks written to a temporary folder" },
  { glob: "app/.server/tracking/worker-bundle.test.ts", why: "tracking threads on a stack in a temporary folder, and the processes they leave" },
  { glob: "app/.server/tracking/theory-on-rendered-stacks.test.ts", why: "tracking and the check on rendered stacks in a temporary folder" },
  { glob: "app/.server/cli/**", why: "the command-line analysis of a frame folder", children: ["app/.server/cli/analyze.ts"] },
  // It starts servers with SQLite files of their own whatever the pass, so a second pass repeats it.
  { glob: "app/.server/storage/startup-check.test.ts", why: "start-up refusals, on SQLite files of its own" },
  { glob: "tests/unit/pg-cluster.test.ts", why: "the test cluster script (skips itself on PostgreSQL)" },
  { glob: "tests/unit/server-guards.test.ts", why: "the HTTP guards of server.mjs" },
  {
    glob: "tests/unit/demo-start.test.ts",
    why: "npm run demo until the server would start: its secret, the build check, signals",
    children: ["scripts/demo.mjs"],
  },
  { glob: "tests/unit/scene-projection.test.ts", why: "POV-Ray renders of the scene check against the projection, in a temporary folder" },
  { glob: "tests/unit/compressed-answers.test.ts", why: "long answers through the compression middleware, on a server of its own" },
  { glob: "tests/unit/node-flags.test.ts", why: "the V8 option on the start commands, read back by a process and its thread" },
];

export const databaseFreeTests = databaseFree.map((d) => d.glob);
