import { afterAll, describe, expect, it } from "vitest";
import { closeTrackingPool, readyTrackingPool, trackingPool } from "./tracking-pool";

afterAll(async () => {
  await closeTrackingPool();
});

describe("the tracking thread a server readies as it starts", () => {
  it("is started, has OpenCV, and has found the float and the dye in every practice frame, whole and in windows", async () => {
    const practice = await readyTrackingPool();
    expect(practice.searched).toBe(96);
    expect(practice.found).toBe(practice.searched);
  }, 60_000);

  it("is kept for the life of the process and practised once per pool", async () => {
    // One practice: the same result object, not a second round's.
    expect(await readyTrackingPool()).toBe(await readyTrackingPool());
    const { piscina } = await trackingPool();
    // piscina keeps this many threads however long they idle (the rest leave after idleTimeout).
    expect(piscina.options.minThreads).toBe(1);
    expect(piscina.threads.length).toBeGreaterThanOrEqual(1);
  }, 60_000);
});
