// The lab the crash test works on, made in the database named by DATABASE_URL (frames under
// UPLOADS_DIR): people with API tokens, a rendered float run ready to track, an empty run to upload
// frames to, and requested bookings to approve. Prints what the test needs as one JSON line.
import sharp from "sharp";
import { Booking, ViewSetup, migrate, sequelize } from "../../app/.server/db";
import { createApiToken } from "../../app/.server/auth/api-tokens";
import { createRun } from "../../app/.server/runs/service";
import { receiveFrameFile } from "../../app/.server/uploads/frames";
import { runInput, seedRunLab } from "../../app/.server/runs/testing";
import { renderRunFrames, type SyntheticRunSpec } from "../../app/lib/tracking/synthetic";
import { rpmToRadPerS } from "../../app/lib/analysis/units";

const frames = Number(process.argv[2] ?? 240);
const bookings = Number(process.argv[3] ?? 40);

await migrate();
const lab = await seedRunLab();
const techToken = (await createApiToken(lab.technician.id, "crash test")).token;
const managerToken = (await createApiToken(lab.manager.id, "crash test")).token;

const W = 800;
const H = 450;
const centre = { x: W / 2, y: H / 2 };
const tankRadiusPx = H / 2 - 12;
const spec: SyntheticRunSpec = {
  width: W,
  height: H,
  frames,
  fps: 30,
  seed: 7,
  camera: "rotating",
  omega: rpmToRadPerS(10),
  centre,
  pxPerM: 700,
  tankRadiusPx,
  noiseSigma: 3,
  tracers: [
    { kind: "float", sigmaPx: 3, brightness: 120, path: { kind: "inertial-circle", centre: { x: 0.03, y: -0.02 }, radius: 0.08, phase: 0.4, drag: 0.02 } },
  ],
};
const trackRun = await createRun(runInput(lab, { purpose: "Tracked while the server is killed" }), lab.technician);
await renderRunFrames(spec, async (frame) => {
  const jpeg = await sharp(Buffer.from(frame.data), { raw: { width: frame.width, height: frame.height, channels: frame.channels } })
    .jpeg({ quality: 90 })
    .toBuffer();
  await receiveFrameFile(trackRun, new File([new Uint8Array(jpeg)], `frame_${frame.index + 1}.jpg`), null);
});
await ViewSetup.create({
  runId: trackRun.id,
  cameraId: lab.camera.id,
  centreXPx: centre.x,
  centreYPx: centre.y,
  tankEdgeXPx: centre.x,
  tankEdgeYPx: centre.y,
  tankEdgeRPx: tankRadiusPx - 6,
  scalePxPerM: 700,
  scalePoints: null,
  mirrored: false,
  createdById: lab.technician.id,
});

const uploadRun = await createRun(runInput(lab, { purpose: "Frames arriving while the server is killed" }), lab.technician);

// Requested bookings a day apart, so every approval can succeed.
const day = 86_400_000;
const first = Math.ceil(Date.now() / day) * day + day;
const requested = [];
for (let i = 0; i < bookings; i++) {
  requested.push(
    await Booking.create({
      equipmentId: lab.tableB.id,
      requesterId: lab.instructor.id,
      state: "requested",
      startAt: new Date(first + i * day),
      endAt: new Date(first + i * day + 3_600_000),
      purpose: `Crash test booking ${i + 1}`,
      plannedRateRpm: null,
      plannedDepthM: null,
      spinUpLeadS: null,
      decidedById: null,
      decidedAt: null,
      declineReason: null,
      cancelledById: null,
      cancelledAt: null,
    }),
  );
}

await sequelize.close();
console.log(JSON.stringify({ techToken, managerToken, trackRunId: trackRun.id, uploadRunId: uploadRun.id, bookingIds: requested.map((b) => b.id) }));
