/// <reference types="vitest/config" />
import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "vite";

export default defineConfig({
  // The React Router plugin stays out of Vitest: with it active, route modules cannot be imported in tests.
  plugins: [tailwindcss(), !process.env.VITEST && reactRouter()],
  resolve: { tsconfigPaths: true },
  build: { chunkSizeWarningLimit: 1500 },
  test: {
    include: ["app/**/*.test.ts", "app/**/*.test.tsx", "tests/unit/**/*.test.ts", "tests/attack/**/*.test.ts"],
    setupFiles: ["tests/setup/vitest-env.ts", "tests/setup/vitest-storage.ts"],
    // TEST_STORAGE=s3 runs the suite against a fake S3 server instead of the local folder.
    globalSetup: ["tests/setup/storage-global.ts"],
    environment: "node",
    // Generous, because npm test runs Vitest beside the browser tests on a 2-core machine (the
    // heaviest tests take 15–25 s alone); speed is measured by the benchmark scripts, not here.
    testTimeout: 120_000,
    hookTimeout: 180_000,
  },
});
