import type { Config } from "@react-router/dev/config";

export default {
  appDirectory: "app",
  // TANKSIDE_BUILD_DIR lets two builds (say, a test run and a demo) live side by side.
  buildDirectory: process.env.TANKSIDE_BUILD_DIR ?? "build",
  ssr: true,
} satisfies Config;
