import sharp from "sharp";
import { Equipment, Run, User, ViewSetup } from "../db";
import { addDemoStep } from "./demo";
import { createRun } from "../runs/service";
import { receiveFrameFile } from "../uploads/frames";
import { enqueueTracking, whenTrackingIdle } from "../jobs/tracking-queue";
import { renderRunFrames, type SyntheticRunSpec } from "~/lib/tracking/synthetic";
import { omegaFromTableRate } from "~/lib/analysis/run-omega";

interface DemoRun {
  table: string;
  tank: string;
  camera: string;
  /** What the technician logged. */
  rpm: number;
  direction: "ccw" | "cw";
  /** What the table really turned at, when it differs (a slipping belt). */
  trueRpm?: number;
  cameraMode: "rotating" | "lab";
  tracer: "float" | "dye";
  depthCm: number;
  temperatureC: number;
  purpose: string;
  notes?: string;
  technician: string;
  daysAgo: number;
  frames: number;
}

const W = 800;
const H = 450;
const FPS = 30;
const PX_PER_M = 700;

/** The invented lab's runs; their frame stacks are rendered here, then tracked like any upload. */
const demoRuns: DemoRun[] = [
  {
    table: "Table A (east bench)",
    tank: "Acrylic tank 57",
    camera: "Overhead camera 1",
    rpm: 10,
    direction: "ccw",
    cameraMode: "rotating",
    tracer: "float",
    depthCm: 12,
    temperatureC: 20.5,
    purpose: "Inertial circles for the second-year demonstration",
    technician: "tech@tankside.example",
    daysAgo: 6,
    frames: 240,
  },
  {
    table: "Table B (west bench)",
    tank: "Wide tank 90",
    camera: "Overhead camera 2",
    rpm: 6,
    direction: "cw",
    cameraMode: "lab",
    tracer: "dye",
    depthCm: 15,
    temperatureC: 19,
    purpose: "Dye patch filmed from the room, clockwise table",
    technician: "tech2@tankside.example",
    daysAgo: 3,
    frames: 240,
  },
  {
    table: "Table A (east bench)",
    tank: "Acrylic tank 57",
    camera: "Overhead camera 1",
    rpm: 8,
    trueRpm: 8.6,
    direction: "ccw",
    cameraMode: "rotating",
    tracer: "float",
    depthCm: 10,
    temperatureC: 21,
    purpose: "Repeat at 8 rpm after the drive was serviced",
    notes: "The rate meter read a little high during spin-up.",
    technician: "tech@tankside.example",
    daysAgo: 1,
    frames: 240,
  },
];

async function renderAndUpload(run: Run, spec: SyntheticRunSpec) {
  await renderRunFrames(spec, async (frame) => {
    const jpeg = await sharp(Buffer.from(frame.data), { raw: { width: frame.width, height: frame.height, channels: frame.channels } })
      .jpeg({ quality: 90 })
      .toBuffer();
    const file = new File([new Uint8Array(jpeg)], `frame_${frame.index + 1}.jpg`, { type: "image/jpeg" });
    await receiveFrameFile(run, file, null);
  });
}

addDemoStep({
  name: "runs",
  async run(log) {
    const byName = async (name: string) => (await Equipment.findOne({ where: { name } }))!;
    for (const [i, d] of demoRuns.entries()) {
      const user = (await User.findOne({ where: { email: d.technician } }))!;
      const [table, tank, camera] = await Promise.all([byName(d.table), byName(d.tank), byName(d.camera)]);
      const reached = new Date(Date.now() - d.daysAgo * 86_400_000 - 3_600_000);
      const run = await createRun(
        {
          tableId: table.id,
          tankId: tank.id,
          cameraId: camera.id,
          setRateRpm: d.rpm,
          direction: d.direction,
          waterDepthCm: d.depthCm,
          waterTemperatureC: d.temperatureC,
          rateReachedAt: reached,
          cameraMode: d.cameraMode,
          frameRateFps: FPS,
          tracer: d.tracer,
          purpose: d.purpose,
          notes: d.notes,
        },
        { id: user.id, email: user.email, name: user.name, role: user.role },
      );
      const when = new Date(reached.getTime() + 20 * 60_000);
      await Run.update({ createdAt: when, updatedAt: when }, { where: { id: run.id }, silent: true });
      const omega = omegaFromTableRate(d.trueRpm ?? d.rpm, d.direction);
      const centre = { x: W / 2 + 3.4, y: H / 2 - 2.1 };
      const tankRadiusPx = Math.min(W, H) / 2 - 12;
      const spec: SyntheticRunSpec = {
        width: W,
        height: H,
        frames: d.frames,
        fps: FPS,
        seed: 1000 + i,
        camera: d.cameraMode,
        omega,
        centre,
        pxPerM: PX_PER_M,
        tankRadiusPx,
        noiseSigma: 3,
        illuminationGradient: 0.12,
        glare: { x: centre.x + 90, y: centre.y - 80, radiusPx: 10, strength: 70 },
        tankMarks: true,
        tracers: [
          d.tracer === "float"
            ? {
                kind: "float",
                sigmaPx: 3,
                brightness: 120,
                path: { kind: "inertial-circle", centre: { x: 0.03, y: -0.02 }, radius: 0.08, phase: 0.4, drag: 0.02 },
              }
            : {
                kind: "dye",
                sigmaAlongPx: 6,
                sigmaAcrossPx: 3.5,
                colour: [200, 40, 120],
                opacity: 0.85,
                path: { kind: "inertial-circle", centre: { x: -0.05, y: 0.04 }, radius: 0.11, phase: 1.2, drag: 0.01 },
              },
        ],
      };
      await renderAndUpload(run, spec);
      await ViewSetup.create({
        runId: run.id,
        cameraId: camera.id,
        centreXPx: centre.x,
        centreYPx: centre.y,
        tankEdgeXPx: centre.x,
        tankEdgeYPx: centre.y,
        tankEdgeRPx: tankRadiusPx - 6,
        scalePxPerM: PX_PER_M,
        scalePoints: JSON.stringify([
          { x: centre.x - 70, y: centre.y + 150 },
          { x: centre.x + 70, y: centre.y + 150 },
        ]),
        mirrored: false,
        createdById: user.id,
      });
      await run.reload();
      await enqueueTracking(run, user.id);
      await whenTrackingIdle();
      log(`run ${run.id}: ${d.frames} frames rendered and tracked`);
    }
    // One run logged but not filmed yet, for the dashboard's waiting list.
    const tech = (await User.findOne({ where: { email: "tech2@tankside.example" } }))!;
    const [table, tank, camera] = await Promise.all([byName("Table B (west bench)"), byName("Acrylic tank 40"), byName("Overhead camera 2")]);
    await createRun(
      {
        tableId: table.id,
        tankId: tank.id,
        cameraId: camera.id,
        setRateRpm: 12,
        direction: "ccw",
        waterDepthCm: 8,
        waterTemperatureC: 20,
        rateReachedAt: undefined,
        cameraMode: "rotating",
        frameRateFps: 60,
        tracer: "dye",
        purpose: "Ekman spin-up with dye streaks (to be filmed)",
      },
      { id: tech.id, email: tech.email, name: tech.name, role: tech.role },
    );
  },
});
