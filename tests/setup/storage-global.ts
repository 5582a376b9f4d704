/**
 * Vitest global set-up for the store the suite runs with. TEST_STORAGE=s3 starts one fake S3
 * server for the whole run and hands its address to every test file (tests/setup/vitest-storage.ts
 * gives each file its own bucket, as each gets its own database); unset or "local" keeps frames and
 * attachments in the local folder, as the server does without S3 settings.
 */
import type { TestProject } from "vitest/node";
import { startFakeS3, type FakeS3Address } from "./fake-s3";

declare module "vitest" {
  export interface ProvidedContext {
    fakeS3: FakeS3Address | null;
  }
}

export default async function setup(project: TestProject) {
  const kind = process.env.TEST_STORAGE ?? "local";
  if (kind !== "s3" && kind !== "local") throw new Error(`TEST_STORAGE is '${kind}'; use s3 or local.`);
  if (kind === "local") {
    project.provide("fakeS3", null);
    return;
  }
  const s3 = await startFakeS3();
  console.log(`[vitest] TEST_STORAGE=s3: a fake S3 server at ${s3.endpoint}, one bucket per test file`);
  project.provide("fakeS3", { endpoint: s3.endpoint });
  return () => s3.close();
}
