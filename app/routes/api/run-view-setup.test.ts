import { beforeAll, describe, expect, it } from "vitest";
import { callApi } from "../../../tests/support/api-contract";
import { tiltedCamera } from "../../../tests/fixtures/tilted-camera";
import { migrate, ViewSetup } from "~/.server/db";
import { createApiToken } from "~/.server/auth/api-tokens";
import { createRun } from "~/.server/runs/service";
import { runInput, seedRunLab, type RunLab } from "~/.server/runs/testing";
import { action } from "./run-view-setup";

let lab: RunLab;
let techToken: string;
let instructorToken: string;

/** Marks on the table (cm) seen by an exact pinhole camera over a 640 × 360 frame, tilted 6° towards the frame's top. */
const camera = tiltedCamera(6, 90);
const table = [
  { x: 10, y: 0 },
  { x: 0, y: 10 },
  { x: -10, y: 0 },
  { x: 0, y: -10 },
];
const known = table.map((t) => ({ ...camera.project(t), tableXCm: t.x, tableYCm: t.y }));
const centre = camera.project({ x: 0, y: 0 });

const put = (runId: number, token: string, body: unknown) =>
  callApi(
    action,
    new Request(`http://localhost/api/v1/runs/${runId}/view-setup`, {
      method: "PUT",
      headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json" },
      body: JSON.stringify(body),
    }),
    { id: String(runId) },
  );

async function runWithFrames() {
  const run = await createRun(runInput(lab), lab.technician);
  await run.update({ frameWidthPx: 640, frameHeightPx: 360 });
  return run;
}

beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
  techToken = (await createApiToken(lab.technician.id, "script")).token;
  instructorToken = (await createApiToken(lab.instructor.id, "script")).token;
});

describe("PUT /api/v1/runs/:id/view-setup", () => {
  it("saves four known points and answers with the lean they give", async () => {
    const run = await runWithFrames();
    const res = await put(run.id, techToken, { centre, knownPoints: known });
    expect(res.status).toBe(200);
    const body = (await res.json()) as { knownPoints: unknown; tiltCorrection: { method: string; tiltDeg: number; sideKnown: boolean } };
    expect(body.knownPoints).toEqual(known);
    expect(body.tiltCorrection.method).toBe("known points");
    expect(body.tiltCorrection.tiltDeg).toBeCloseTo(6, 6);
    expect(body.tiltCorrection.sideKnown).toBe(true);
  });

  it("refuses bad known points in words (422, the field named) and keeps the saved setup", async () => {
    const run = await runWithFrames();
    expect((await put(run.id, techToken, { centre, knownPoints: known })).status).toBe(200);
    const saved = (await ViewSetup.findOne({ where: { runId: run.id } }))!.knownPoints;
    const cases: [unknown, string][] = [
      [known.slice(0, 3), "A correction from known points needs at least 4 of them; 3 are placed."],
      [
        [...known.slice(0, 3), { ...known[1]!, tableXCm: 5, tableYCm: 5 }],
        "Known points 2 and 4 are on the same spot of the frame; remove one and click another mark.",
      ],
      [known.map((k, i) => ({ ...k, x: 100 + 40 * i, y: 60 + 20 * i })), "The known points lie in one line in the frame; pick marks spread around the tank."],
    ];
    for (const [knownPoints, message] of cases) {
      const res = await put(run.id, techToken, { centre, knownPoints });
      expect(res.status).toBe(422);
      expect(await res.json()).toEqual({ error: { code: "setup_not_usable", message, issues: [{ field: "knownPoints", message }] } });
    }
    expect((await ViewSetup.findOne({ where: { runId: run.id } }))!.knownPoints).toBe(saved);
  });

  it("refuses a table position that is not a number as a malformed body (400), naming the field", async () => {
    const run = await runWithFrames();
    const res = await put(run.id, techToken, { centre, knownPoints: known.map((k, i) => (i === 2 ? { ...k, tableYCm: "ten" } : k)) });
    expect(res.status).toBe(400);
    const body = (await res.json()) as { error: { code: string; issues: { field: string; message: string }[] } };
    expect(body.error.code).toBe("invalid_input");
    expect(body.error.issues).toEqual([{ field: "knownPoints.2.tableYCm", message: "A known point's table y must be a number of cm." }]);
    expect(await ViewSetup.findOne({ where: { runId: run.id } })).toBeNull();
  });

  it("refuses a centre outside the frame (422), a run without frames (409) and an instructor (403)", async () => {
    const run = await runWithFrames();
    const outside = await put(run.id, techToken, { centre: { x: 700, y: 10 } });
    expect(outside.status).toBe(422);
    expect(((await outside.json()) as { error: { issues: unknown } }).error.issues).toEqual([
      { field: "centre", message: "The centre must lie inside the 640 × 360 px frame." },
    ]);
    const bare = await createRun(runInput(lab), lab.technician);
    expect((await put(bare.id, techToken, { centre })).status).toBe(409);
    expect((await put(run.id, instructorToken, { centre })).status).toBe(403);
  });
});
