/**
 * Tracking while the frames arrive (Decision 61). A client that declares each frame's number in
 * the finished stack and the stack's length (app/lib/frame-stream.ts) gets its frames searched as
 * they land, and the table's rate read from them in stack order (rate-stream.ts): once the frames the still background is made of are in, the background is built
 * and every frame of the run is searched against it, each new one as its upload is accepted. The
 * detections are stored by the frame's content and the search's basis (streamed-detections.ts);
 * the tracking job, started by the upload that brings the stack to its declared length (or by
 * the client), takes them and searches only what is missing. Best effort by design: a stream
 * that fails, is stopped or was lost with a restart only leaves the job more frames to search.
 * Runs in each process that takes tracking work (not with TANKSIDE_WORKERS=0).
 */
import os from "node:os";
import { Frame, Run, ViewSetup } from "../db";
import { env } from "../env";
import { frameKey, ScratchDir, store } from "../storage";
import { prepareStackSearch, type StackSearch } from "../tracking/track-frame-stack";
import { backgroundSampleIndices } from "~/lib/tracking/background";
import type { FrameStreamDeclaration } from "~/lib/frame-stream";
import type { Detection } from "~/lib/tracking/types";
import { saveStreamed, streamBasis, streamedShas } from "./streamed-detections";
import { rateSettingsFrom, trackingSetupFrom } from "./tracking-setup";
import { startRateStream, type RateStream, type StreamedRate } from "./rate-stream";
import { warmTheoryCheck } from "../runs/check-warm-up";

/** Frames being decoded or searched at once for one run: the pool's threads, each with one waiting. */
const inFlightLimit = Math.max(1, os.availableParallelism()) * 2;
const flushMs = 200;
/** A stream that hears of no frame for this long lets go of its background and scratch folder. */
const idleMs = 10 * 60_000;

interface LandedFrame {
  id: number;
  sha256: string;
}

interface Prepared {
  search: StackSearch;
  basis: string;
}

class RunStream {
  private readonly numbered = new Map<number, LandedFrame>();
  private prepared: Promise<Prepared | null> | null = null;
  private readonly queued = new Set<string>();
  private readonly waiting: LandedFrame[] = [];
  private active = 0;
  private rows: { sha256: string; detections: Detection[] }[] = [];
  /** Every frame this stream searched, by content: handed to the job in memory when it settles (Decision 67). */
  private readonly found = new Map<string, Detection[]>();
  private flushTimer: NodeJS.Timeout | null = null;
  private flushing: Promise<void> = Promise.resolve();
  private idleTimer: NodeJS.Timeout | null = null;
  private drained: (() => void)[] = [];
  private readonly scratch: ScratchDir;
  readonly controller = new AbortController();
  /** The table's rate read in stack order as the frames come (rate-stream.ts), when the view allows one. */
  private readonly rate: Promise<RateStream | null>;
  /** Frames searched by this stream (for the log and the tests). */
  searched = 0;

  constructor(
    readonly runId: number,
    readonly expected: number,
  ) {
    this.scratch = new ScratchDir(`frame-stream-${runId}`);
    this.rate = this.startRate().catch(() => null);
    // The fit follows the last frame within a second or two: have its code compiled before then.
    warmTheoryCheck();
    this.touch();
  }

  private async startRate(): Promise<RateStream | null> {
    const [run, setup] = await Promise.all([Run.findByPk(this.runId), ViewSetup.findOne({ where: { runId: this.runId } })]);
    if (!run || !setup) return null;
    return startRateStream(rateSettingsFrom(run, setup), this.expected, run.frameRateFps, this.scratch, this.controller.signal);
  }

  land(frame: LandedFrame, frameNumber: number) {
    this.touch();
    void this.rate.then((rate) => rate?.offer(frameNumber - 1, frame));
    this.numbered.set(frameNumber - 1, frame);
    if (!this.prepared) {
      const sampled = backgroundSampleIndices(this.expected);
      if (!sampled.every((i) => this.numbered.has(i))) return;
      this.prepared = this.prepare(sampled.map((i) => this.numbered.get(i)!)).catch((err: unknown) => {
        if (!this.controller.signal.aborted)
          console.warn(`[tracking] run ${this.runId}: frames are not searched as they arrive (${err instanceof Error ? err.message : String(err)})`);
        return null;
      });
      return;
    }
    this.enqueue(frame);
  }

  /** The background from the frames declared as its samples; then every frame the run already has. */
  private async prepare(sampled: LandedFrame[]): Promise<Prepared | null> {
    const run = await Run.findByPk(this.runId);
    const setup = await ViewSetup.findOne({ where: { runId: this.runId } });
    if (!run || !setup || !run.frameWidthPx || !run.frameHeightPx) return null;
    const frames = await Frame.findAll({ where: { id: sampled.map((f) => f.id) } });
    const byId = new Map(frames.map((f) => [f.id, f]));
    const sampleIndices = backgroundSampleIndices(this.expected);
    // The stack's length, with only the sampled places filled in: the background reads no others.
    const files: string[] = Array.from({ length: this.expected }, () => "");
    for (const [j, landed] of sampled.entries()) {
      const frame = byId.get(landed.id);
      if (!frame) return null; // removed meanwhile
      files[sampleIndices[j]!] = await store().localPath(frameKey(frame), this.scratch);
    }
    const tracking = trackingSetupFrom(run, setup);
    const size = { width: run.frameWidthPx, height: run.frameHeightPx };
    const basis = streamBasis(
      tracking,
      size,
      sampled.map((f) => f.sha256),
    );
    // A numbered stack is spaced by the run's frame rate, as the tracking job times it.
    const search = await prepareStackSearch(files, tracking, size, this.controller.signal, (index) => index / run.frameRateFps);
    const prepared = { search, basis };
    const already = await streamedShas(this.runId, basis);
    for (const sha of already) this.queued.add(sha);
    const present = await Frame.findAll({ where: { runId: this.runId }, attributes: ["id", "sha256"], order: [["position", "ASC"]] });
    for (const f of present) this.startSearch(prepared, { id: f.id, sha256: f.sha256 });
    return prepared;
  }

  private enqueue(frame: LandedFrame) {
    void this.prepared?.then((prepared) => {
      if (prepared) this.startSearch(prepared, frame);
    });
  }

  private startSearch(prepared: Prepared, frame: LandedFrame) {
    if (this.queued.has(frame.sha256) || this.controller.signal.aborted) return;
    this.queued.add(frame.sha256);
    this.waiting.push(frame);
    this.pump(prepared);
  }

  private pump(prepared: Prepared) {
    while (this.active < inFlightLimit && this.waiting.length) {
      const frame = this.waiting.shift()!;
      this.active++;
      void this.searchOne(prepared, frame).finally(() => {
        this.active--;
        this.pump(prepared);
        if (this.active === 0 && this.waiting.length === 0) this.flushNow();
      });
    }
  }

  private async searchOne(prepared: Prepared, frame: LandedFrame) {
    try {
      const row = await Frame.findByPk(frame.id);
      if (!row || this.controller.signal.aborted) return;
      const file = await store().localPath(frameKey(row), this.scratch);
      const detections = await prepared.search.detect(file, row.position);
      this.searched++;
      this.rows.push({ sha256: frame.sha256, detections });
      this.found.set(frame.sha256, detections);
      this.flushTimer ??= setTimeout(() => this.flushNow(), flushMs);
    } catch (err) {
      // The job searches it; a frame removed while it was read lands here too.
      this.queued.delete(frame.sha256);
      if (!this.controller.signal.aborted)
        console.warn(`[tracking] run ${this.runId}: a frame was not searched as it arrived (${err instanceof Error ? err.message : String(err)})`);
    }
  }

  private flushNow() {
    if (this.flushTimer) clearTimeout(this.flushTimer);
    this.flushTimer = null;
    const rows = this.rows;
    this.rows = [];
    const basis = this.prepared;
    this.flushing = this.flushing
      .then(async () => {
        const prepared = await basis;
        if (prepared && rows.length) await saveStreamed(this.runId, prepared.basis, rows);
      })
      .catch((err: unknown) =>
        console.warn(`[tracking] run ${this.runId}: streamed detections not stored (${err instanceof Error ? err.message : String(err)})`),
      )
      .finally(() => {
        if (this.active === 0 && this.waiting.length === 0 && this.rows.length === 0) for (const resolve of this.drained.splice(0)) resolve();
      });
  }

  /**
   * Resolves when every frame that has landed is searched and stored (or given up), with the rate
   * as read so far and the stream's finds on its basis, so the job need not read them back.
   */
  async settle(): Promise<Settled> {
    const prepared = await this.prepared;
    if (this.active > 0 || this.waiting.length > 0) await new Promise<void>((resolve) => this.drained.push(resolve));
    this.flushNow();
    await this.flushing;
    const rate = (await (await this.rate)?.finish()) ?? null;
    return { searched: this.searched, rate, found: prepared ? { basis: prepared.basis, bySha: this.found } : null };
  }

  private touch() {
    if (this.idleTimer) clearTimeout(this.idleTimer);
    this.idleTimer = setTimeout(() => void closeStream(this.runId), idleMs);
    this.idleTimer.unref();
  }

  async close() {
    if (this.idleTimer) clearTimeout(this.idleTimer);
    this.controller.abort();
    for (const resolve of this.drained.splice(0)) resolve();
    await this.flushing;
    await this.scratch.dispose().catch(() => undefined);
  }
}

const streams = new Map<number, RunStream>();

async function closeStream(runId: number) {
  const stream = streams.get(runId);
  if (!stream) return;
  streams.delete(runId);
  await stream.close();
}

/**
 * An accepted frame of a stream: searched as soon as the background allows. A new declared length
 * starts the run's stream afresh. Nothing here fails an upload.
 */
export function frameLanded(runId: number, frame: LandedFrame, declared: FrameStreamDeclaration) {
  if (!env.runsJobs) return;
  let stream = streams.get(runId);
  if (stream && stream.expected !== declared.expectedFrames) {
    void closeStream(runId);
    stream = undefined;
  }
  if (!stream) {
    stream = new RunStream(runId, declared.expectedFrames);
    streams.set(runId, stream);
  }
  stream.land(frame, declared.frameNumber);
}

/** What a settled stream hands the job: how many frames it searched, the rate as read, and its finds by frame content on its basis. */
export interface Settled {
  searched: number;
  rate: StreamedRate | null;
  found: { basis: string; bySha: ReadonlyMap<string, Detection[]> } | null;
}

/**
 * The tracking job is about to read the streamed detections: let this process's stream of the run
 * finish what it has started and store it, then end the stream (frames after this are the job's).
 */
export async function settleFrameStream(runId: number): Promise<Settled> {
  const stream = streams.get(runId);
  if (!stream) return { searched: 0, rate: null, found: null };
  const settled = await stream.settle();
  await closeStream(runId);
  return settled;
}

/** Ends every stream (a stop); what was stored stays for the jobs. */
export async function stopFrameStreams() {
  await Promise.all([...streams.keys()].map((id) => closeStream(id)));
}
