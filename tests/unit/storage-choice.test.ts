import { describe, expect, inject, it } from "vitest";
import { store } from "~/.server/storage";

/** The suite runs with the store it was asked for: a bucket under TEST_STORAGE=s3, else the local folder. */
describe("the store the test suite runs with", () => {
  it("follows TEST_STORAGE", () => {
    const s3 = inject("fakeS3");
    expect(store().kind).toBe(s3 ? "s3" : "local");
    if (s3) expect(store().where).toContain(`at S3_ENDPOINT ${s3.endpoint}`);
  });
});
