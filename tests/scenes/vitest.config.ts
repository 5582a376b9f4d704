/**
 * The ray-traced scene tests (issue 16): `npx vitest run --config tests/scenes/vitest.config.ts`.
 * `npm test` runs those listed in scripts/scenes-in-suite.mjs (the ones that meet their targets),
 * rendering missing stacks first.
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
