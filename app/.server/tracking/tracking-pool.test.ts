import { setFlagsFromString } from "node:v8";
import { runInNewContext } from "node:vm";
import { describe, expect, it } from "vitest";
import { failPool, runTask, type TrackingPool } from "./tracking-pool";
import type { TrackTask, TrackTaskResult } from "./track-worker";

/** A pool whose "worker" answers each task with a detection list of its own, as a frame's search does. */
function fakePool(run: (task: TrackTask) => Promise<TrackTaskResult>): TrackingPool {
  return { piscina: { run } as unknown as TrackingPool["piscina"], failure: null, pending: new Set() };
}

const detections = (i: number): TrackTaskResult => Array.from({ length: 40 }, (_, j) => ({ x: i, y: j, area: 30, roundness: 0.9, intensity: 200 }));
const task = { kind: "warm-up" } as unknown as TrackTask;

function collectGarbage(): void {
  setFlagsFromString("--expose-gc");
  (runInNewContext("gc") as () => void)();
}

describe("the tracking pool's tasks", () => {
  it("keeps nothing of a settled task: 20 000 tasks' results are not held by the pool", async () => {
    let i = 0;
    const workers = fakePool(async () => detections(i++));
    for (let k = 0; k < 200; k++) await runTask(workers, task);
    collectGarbage();
    const before = process.memoryUsage().heapUsed;
    for (let k = 0; k < 20_000; k++) await runTask(workers, task);
    collectGarbage();
    const grown = (process.memoryUsage().heapUsed - before) / 1e6;
    // Held, the results would be some 40 MB (about 2 KB each); the bound leaves room for the test's own heap.
    expect(grown).toBeLessThan(5);
    expect(workers.pending.size).toBe(0);
  });

  it("rejects the tasks under way and every later one when a worker dies outside a task", async () => {
    const workers = fakePool(() => new Promise<TrackTaskResult>(() => {}));
    const underWay = runTask(workers, task);
    expect(workers.pending.size).toBe(1);
    failPool(workers, new Error("The tracking workers stopped: out of memory"));
    await expect(underWay).rejects.toThrow("out of memory");
    await expect(runTask(workers, task)).rejects.toThrow("out of memory");
    expect(workers.pending.size).toBe(0);
  });

  it("passes a task's own failure on, and forgets the task", async () => {
    const workers = fakePool(() => Promise.reject(new Error("Frame region is 10×10×1, the plan expects 20×20×1.")));
    await expect(runTask(workers, task)).rejects.toThrow("the plan expects");
    expect(workers.pending.size).toBe(0);
  });
});
