import { describe, expect, it } from "vitest";
import { workerExecArgv } from "./worker-options";

describe("the tracking threads' Node options", () => {
  it("leave out tsx's loader when it is all the process was started with", () => {
    const tsx = ["--require", "/srv/tankside/node_modules/tsx/dist/preflight.cjs", "--import", "file:///srv/tankside/node_modules/tsx/dist/loader.mjs"];
    expect(workerExecArgv(tsx)).toEqual([]);
    expect(workerExecArgv(["--import", "tsx"])).toEqual([]);
    expect(workerExecArgv(["--import=tsx"])).toEqual([]);
  });

  it("are inherited unchanged when there is no tsx, or other options a thread cannot be given", () => {
    expect(workerExecArgv([])).toBeUndefined();
    expect(workerExecArgv(["--enable-source-maps"])).toBeUndefined();
    // A V8 option given explicitly makes the thread refuse to start; inherited it is fine.
    expect(workerExecArgv(["--max-old-space-size=2000", "--import", "tsx"])).toBeUndefined();
    // A package merely named like it is not tsx.
    expect(workerExecArgv(["--import", "tsx-helper"])).toBeUndefined();
  });
});
