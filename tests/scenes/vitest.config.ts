/**
 * The ray-traced scene targets (issue 16) run apart from `npm test` until the tracker meets them:
 * `npx vitest run --config tests/scenes/vitest.config.ts`. To put them into `npm test`, move
 * scene-tracking.test.ts under tests/unit/ and list it in scripts/database-free-tests.mjs.
 */
import { defineConfig } from "vitest/config";
import base from "../../vite.config";

export default defineConfig({
  ...base,
  test: {
    ...base.test,
    // Only this folder (mergeConfig would add it to the main list instead).
    include: ["tests/scenes/**/*.test.ts"],
    // Rendering a missing stack takes minutes on a busy machine.
    testTimeout: 1_800_000,
    hookTimeout: 1_800_000,
  },
});
