import os from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { workersSetupProblem } from "../env";
import { WorkerProcess } from "./testing";

describe("where background jobs run", () => {
  it("TANKSIDE_WORKERS=0 is refused with SQLite, whose web process is the only one that can run jobs", () => {
    const problem = workersSetupProblem({ TANKSIDE_WORKERS: "0", DATABASE_URL: "sqlite:/srv/tankside.sqlite" });
    expect(problem).toMatch(/TANKSIDE_WORKERS=0 needs PostgreSQL/);
    expect(problem!.split("\n")).toHaveLength(1);
  });

  it("TANKSIDE_WORKERS=0 is accepted with PostgreSQL; unset and 1 are accepted with either; anything else is refused", () => {
    expect(workersSetupProblem({ TANKSIDE_WORKERS: "0", DATABASE_URL: "postgres://tankside@db.lab.example/tankside" })).toBeNull();
    expect(workersSetupProblem({ DATABASE_URL: "sqlite:/srv/tankside.sqlite" })).toBeNull();
    expect(workersSetupProblem({ TANKSIDE_WORKERS: "1", DATABASE_URL: "sqlite:/srv/tankside.sqlite" })).toBeNull();
    expect(workersSetupProblem({ TANKSIDE_WORKERS: "no", DATABASE_URL: "postgres://db/tankside" })).toMatch(/must be 1 .* or 0/);
  });

  it("`npm run worker` against SQLite refuses with one line and status 1", async () => {
    const file = path.join(os.tmpdir(), `tankside-worker-refusal-${process.pid}.sqlite`);
    const worker = new WorkerProcess({ DATABASE_URL: `sqlite:${file}` });
    const { code } = await worker.exited;
    expect(code).toBe(1);
    expect(worker.output.trim().split("\n")).toEqual([
      "npm run worker needs PostgreSQL (DATABASE_URL=postgres://…): with SQLite the web process runs tracking, mail and reminders itself, on one machine.",
    ]);
  });
});
