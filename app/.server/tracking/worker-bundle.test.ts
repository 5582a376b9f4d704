import { execFileSync } from "node:child_process";
import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { smallLabFloatCentre, smallLabFloatSpec, writeSyntheticStack, type WrittenStack } from "../../../tests/fixtures/tracking/write-stack";
import { trackFrameStack } from "./track-frame-stack";
import { closeTrackingPool } from "./tracking-pool";

const centre = smallLabFloatCentre;
let dir: string;
let stack: WrittenStack;

beforeAll(async () => {
  dir = await mkdtemp(path.join(os.tmpdir(), "tankside-worker-bundle-"));
  stack = await writeSyntheticStack(path.join(dir, "float"), smallLabFloatSpec(12));
});
afterAll(async () => {
  await closeTrackingPool();
  await rm(dir, { recursive: true, force: true });
});

/** This process's children as `ps` lists them: pid, state (Z = defunct) and name. */
function children(): { pid: number; state: string; name: string }[] {
  let out = "";
  try {
    out = execFileSync("ps", ["-o", "pid=,stat=,comm=", "--ppid", String(process.pid)], { encoding: "utf8" });
  } catch {
    // ps exits 1 when there is no child at all.
  }
  return out
    .trim()
    .split("\n")
    .filter(Boolean)
    .map((line) => {
      const [pid, state, name] = line.trim().split(/\s+/);
      return { pid: Number(pid), state: state ?? "", name: name ?? "" };
    });
}

describe("the tracking threads", () => {
  it("leave no defunct process behind when their pool ends, job after job", async () => {
    for (let job = 0; job < 3; job++) {
      const result = await trackFrameStack({
        files: stack.files,
        times: stack.times,
        setup: { tracer: "float", centre, tankEdge: { cx: centre.x, cy: centre.y, r: 106 }, mirrored: false },
      });
      expect(result.tracks.length).toBeGreaterThan(0);
      // Ending the pool ends its threads, as an idle timeout does in the server.
      await closeTrackingPool();
    }
    await new Promise((r) => setTimeout(r, 300));
    expect(children().filter((c) => c.state.startsWith("Z"))).toEqual([]);
  });
});
