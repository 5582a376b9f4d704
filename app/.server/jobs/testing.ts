import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";
import sharp from "sharp";
import { Run, Track, ViewSetup } from "../db";
import { receiveFrameFile } from "../uploads/frames";
import { renderRunFrames } from "~/lib/tracking/synthetic";
import { floatStackCentre, floatStackSpec } from "~/lib/tracking/float-stack";

/** Test support for the shared queue: real `npm run worker` processes, and rendered runs to track. */

const root = path.resolve(import.meta.dirname, "../../..");

/** One `app/.server/worker.ts` process (what `npm run worker` starts), with its output kept. */
export class WorkerProcess {
  readonly proc: ChildProcess;
  output = "";
  readonly exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;

  constructor(env: NodeJS.ProcessEnv = {}) {
    this.proc = spawn(process.execPath, ["--import", "tsx", "app/.server/worker.ts"], {
      cwd: root,
      env: { ...process.env, ...env },
      stdio: ["ignore", "pipe", "pipe"],
    });
    this.proc.stdout!.on("data", (b: Buffer) => (this.output += b.toString()));
    this.proc.stderr!.on("data", (b: Buffer) => (this.output += b.toString()));
    this.exited = new Promise((resolve) => this.proc.on("exit", (code, signal) => resolve({ code, signal })));
  }

  /** Resolves with the worker's name once it takes jobs. */
  async ready(timeoutMs = 60_000): Promise<string> {
    const started = Date.now();
    for (;;) {
      const m = /\[worker\] taking tracking, mail and reminder jobs as (\S+)/.exec(this.output);
      if (m?.[1]) return m[1];
      if (this.proc.exitCode !== null || this.proc.signalCode !== null) throw new Error(`the worker stopped before taking jobs:\n${this.output}`);
      if (Date.now() - started > timeoutMs) throw new Error(`the worker did not start in ${timeoutMs} ms:\n${this.output}`);
      await new Promise((r) => setTimeout(r, 100));
    }
  }

  /** The tracking jobs this worker took, in order, from its log. */
  jobsTaken(): number[] {
    return [...this.output.matchAll(/\[tracking\] job (\d+) \(run \d+\) taken by/g)].map((m) => Number(m[1]));
  }

  async stop(signal: NodeJS.Signals = "SIGTERM") {
    if (this.proc.exitCode === null && this.proc.signalCode === null) this.proc.kill(signal);
    return this.exited;
  }
}

export const centre = floatStackCentre;

/** Renders a stack once as JPEG files, so many runs can be given the very same frames. */
export async function renderStack(frames: number): Promise<File[]> {
  const files: File[] = [];
  await renderRunFrames(floatStackSpec(frames), async (f) => {
    const jpeg = await sharp(Buffer.from(f.data), { raw: { width: f.width, height: f.height, channels: 3 } })
      .jpeg({ quality: 92 })
      .toBuffer();
    files.push(new File([new Uint8Array(jpeg)], `frame_${String(f.index).padStart(4, "0")}.jpg`));
  });
  return files;
}

/** The view setup of the rendered float stack (lib/tracking/float-stack.ts): its centre, tank edge and scale. */
export function floatStackViewSetup(run: Run, userId: number) {
  return ViewSetup.create({
    runId: run.id,
    cameraId: run.cameraId,
    centreXPx: centre.x,
    centreYPx: centre.y,
    tankEdgeXPx: centre.x,
    tankEdgeYPx: centre.y,
    tankEdgeRPx: 105,
    scalePxPerM: 600,
    scalePoints: null,
    mirrored: false,
    createdById: userId,
  });
}

/** Stores the frames on the run and marks its view, so it is ready to track. */
export async function prepareRun(run: Run, files: File[], userId: number) {
  for (const file of files) await receiveFrameFile(run, file, null);
  await floatStackViewSetup(run, userId);
  await run.reload();
  return run;
}

/** A run's tracks as stored (points: [t, x, y, frameIndex]), to compare runs tracked differently. */
export async function tracksOf(runId: number) {
  const tracks = await Track.findAll({ where: { runId }, order: [["number", "ASC"]] });
  return tracks.map((t) => ({ number: t.number, pointCount: t.pointCount, points: JSON.parse(t.points) as number[][] }));
}

export async function waitFor<T>(what: string, probe: () => Promise<T | null | undefined | false>, timeoutMs: number, everyMs = 100): Promise<T> {
  const started = Date.now();
  for (;;) {
    const value = await probe();
    if (value) return value;
    if (Date.now() - started > timeoutMs) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}
