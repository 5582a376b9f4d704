// With TEST_STORAGE=s3 (see storage-global.ts) each test file keeps its frames and attachments in
// a bucket of its own on the one fake S3 server, set before any app module reads the settings.
// Otherwise the local folder: S3 settings from the shell are dropped, so no test reaches a real bucket.
import { inject } from "vitest";
import { createBucket, s3Env, s3SettingNames } from "./fake-s3";

const s3 = inject("fakeS3");
for (const name of s3SettingNames) delete process.env[name];
if (s3) Object.assign(process.env, s3Env(s3, await createBucket(s3)));
