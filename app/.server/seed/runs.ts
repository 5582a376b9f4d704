import sharp from "sharp";
import { Equipment, Frame, Run, TrackingJob, User, ViewSetup } from "../db";
import { addDemoStep } from "./demo";
import { createRun } from "../runs/service";
import { receiveFrameFile } from "../uploads/frames";
import { enqueueTracking, whenTrackingIdle } from "../jobs/tracking-queue";
import { createSyntheticRenderer } from "~/lib/tracking/synthetic";
import { demoCentre, demoStackSpec, FPS, PX_PER_M, tankRadiusPx } from "./demo-stacks";

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

/** Each demo run is known by its purpose, which no other run of the invented lab shares. */
function demoRunRow(d: DemoRun) {
  return Run.findOne({ where: { purpose: d.purpose } });
}

const byName = async (name: string) => (await Equipment.findOne({ where: { name } }))!;
const byEmail = async (email: string) => (await User.findOne({ where: { email } }))!;

/** The demo runs' rows, as logged by their technicians (fast: no frames yet), and one run not filmed yet. */
export async function createDemoRuns() {
  for (const d of demoRuns) {
    if (await demoRunRow(d)) continue;
    const user = await byEmail(d.technician);
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
  }
  // One run logged but not filmed yet, for the dashboard's waiting list.
  const unfilmed = "Ekman spin-up with dye streaks (to be filmed)";
  if (await Run.findOne({ where: { purpose: unfilmed } })) return;
  const tech = await byEmail("tech2@tankside.example");
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
      purpose: unfilmed,
    },
    { id: tech.id, email: tech.email, name: tech.name, role: tech.role },
  );
}

/** What the demo's preparation has reached, for the dashboard while `npm run demo` prepares in the background. */
export interface DemoProgress {
  runs: number;
  /** Runs whose frames are all rendered and whose tracking has been asked for. */
  prepared: number;
  /** The run being rendered now, and how many of its frames exist. */
  rendering: { runId: number; frames: number; of: number } | null;
}

/**
 * Renders each demo run's frames (only those still missing, so an interrupted start carries on),
 * marks its view and asks for its tracking. A run whose tracking was ever asked for is left as it
 * is: the queue resumes an interrupted job itself, and frames someone removed stay removed.
 * `stopping` is asked between frames, so a server that stops does not wait for a whole stack.
 */
export async function prepareDemoRuns(log: (msg: string) => void, stopping: () => boolean = () => false, progress?: (p: DemoProgress) => void) {
  const state: DemoProgress = { runs: demoRuns.length, prepared: 0, rendering: null };
  for (const [i, d] of demoRuns.entries()) {
    if (stopping()) return;
    const run = await demoRunRow(d);
    if (!run || run.state === "signed_off" || (await TrackingJob.count({ where: { runId: run.id } })) > 0) {
      state.prepared++;
      progress?.(state);
      continue;
    }
    const user = await byEmail(d.technician);
    const renderer = createSyntheticRenderer(demoStackSpec({ ...d, rpm: d.trueRpm ?? d.rpm, seed: 1000 + i }));
    for (let index = await Frame.count({ where: { runId: run.id } }); index < d.frames; index++) {
      if (stopping()) return;
      state.rendering = { runId: run.id, frames: index, of: d.frames };
      progress?.(state);
      const frame = renderer.frame(index);
      const jpeg = await sharp(Buffer.from(frame.data), { raw: { width: frame.width, height: frame.height, channels: frame.channels } })
        .jpeg({ quality: 90 })
        .toBuffer();
      await receiveFrameFile(run, new File([new Uint8Array(jpeg)], `frame_${index + 1}.jpg`, { type: "image/jpeg" }), null);
    }
    state.rendering = null;
    if (!(await ViewSetup.findOne({ where: { runId: run.id } }))) {
      const camera = await byName(d.camera);
      await ViewSetup.create({
        runId: run.id,
        cameraId: camera.id,
        centreXPx: demoCentre.x,
        centreYPx: demoCentre.y,
        tankEdgeXPx: demoCentre.x,
        tankEdgeYPx: demoCentre.y,
        tankEdgeRPx: tankRadiusPx - 6,
        scalePxPerM: PX_PER_M,
        scalePoints: JSON.stringify([
          { x: demoCentre.x - 70, y: demoCentre.y + 150 },
          { x: demoCentre.x + 70, y: demoCentre.y + 150 },
        ]),
        mirrored: false,
        createdById: user.id,
      });
    }
    await run.reload();
    await enqueueTracking(run, user.id);
    state.prepared++;
    progress?.(state);
    log(`run ${run.id}: ${d.frames} frames rendered, tracking asked for`);
  }
}

addDemoStep({
  name: "runs",
  order: 3,
  async run(log, options) {
    await createDemoRuns();
    // `npm run demo` serves first and renders and tracks in the server (seed/in-server.ts).
    if (options?.framesLater) return;
    await prepareDemoRuns(log);
    await whenTrackingIdle();
  },
});
