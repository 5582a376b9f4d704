import { describe, expect, it } from "vitest";
import { workerExecArgv } from "./worker-options";

describe("the tracking threads' Node options", () => {
  it("leave out tsx's loader when it is all the process was started with", () => {
    const tsx = ["--require", "/srv/tankside/node_modules/tsx/dist/preflight.cjs", "--import", "file:///srv/tankside/node_modules/tsx/dist/loader.mjs"];
    expect(workerExecArgv(tsx)).toEqual([]);
    expect(workerExecArgv(["--import", "tsx"])).toEqual([]);
    expect(workerExecArgv(["--import=tsx"])).toEqual([]);
  });

  it("leave out V8's heap sizes beside it, which hold for every thread and which a thread refuses given explicitly", () => {
    expect(workerExecArgv(["--initial-heap-size=64", "--require", "/srv/t/node_modules/tsx/dist/preflight.cjs", "--import", "tsx"])).toEqual([]);
    expect(workerExecArgv(["--max-old-space-size=2000", "--import", "tsx"])).toEqual([]);
    // Without tsx there is nothing to leave out: inherited, they are fine.
    expect(workerExecArgv(["--initial-heap-size=64"])).toBeUndefined();
  });

  it("are inherited unchanged when there is no tsx, or other options a thread cannot be given", () => {
    expect(workerExecArgv([])).toBeUndefined();
    expect(workerExecArgv(["--enable-source-maps"])).toBeUndefined();
    // Any other option a thread refuses given explicitly: inherited as it is, tsx with it.
    expect(workerExecArgv(["--expose-gc", "--import", "tsx"])).toBeUndefined();
    // A package merely named like it is not tsx.
    expect(workerExecArgv(["--import", "tsx-helper"])).toBeUndefined();
  });
});
