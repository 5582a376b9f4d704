/**
 * The table's rate read from the frames while they arrive (Decision 61): the follower of
 * tracking/rate-pass.ts fed in stack order, each frame as soon as every frame before it (at the
 * pass's step) is in. Its result is handed to the tracking job with what it read (each frame's
 * content and time) and the settings it read them with; the job takes it only when that is
 * exactly what its own pass would read, and reads the frames itself otherwise.
 */
import { Frame } from "../db";
import { frameKey, store, type ScratchDir } from "../storage";
import { greyFrame, rateResult, rateStep, startRateFollowing, type MeasuredRateColumns, type RateFollowing, type RateSettings } from "../tracking/rate-pass";

export interface StreamedRate {
  settingsKey: string;
  /** The frames read, in order: content and time. */
  read: { sha256: string; t: number }[];
  columns: MeasuredRateColumns;
}

export const rateSettingsKey = (settings: RateSettings) => JSON.stringify(settings);

/** Whether `streamed` read exactly the frames a pass over this stack would, with the same settings. */
export function streamedRateFits(streamed: StreamedRate | null, settings: RateSettings, shas: readonly string[], times: readonly number[]): boolean {
  if (!streamed || streamed.settingsKey !== rateSettingsKey(settings)) return false;
  const step = rateStep(shas.length);
  const wanted: { sha256: string; t: number }[] = [];
  for (let i = 0; i < shas.length; i += step) wanted.push({ sha256: shas[i]!, t: times[i]! });
  return wanted.length === streamed.read.length && wanted.every((w, k) => w.sha256 === streamed.read[k]!.sha256 && w.t === streamed.read[k]!.t);
}

export class RateStream {
  private next = 0;
  private readonly offered = new Map<number, { frameId: number; sha256: string }>();
  private readonly read: { sha256: string; t: number }[] = [];
  private chain: Promise<void> = Promise.resolve();
  /** A frame could not be read (removed meanwhile, a storage error): the job reads the rate itself. */
  private broken = false;
  private readonly step: number;

  constructor(
    private readonly following: RateFollowing,
    private readonly settings: RateSettings,
    expected: number,
    private readonly frameRateFps: number,
    private readonly scratch: ScratchDir,
    private readonly signal: AbortSignal,
  ) {
    this.step = rateStep(expected);
  }

  /** Frame `index` (0-based in the finished stack) is in. */
  offer(index: number, frame: { id: number; sha256: string }) {
    if (index % this.step !== 0 || index < this.next) return;
    this.offered.set(index, { frameId: frame.id, sha256: frame.sha256 });
    this.chain = this.chain.then(() => this.drain());
  }

  private async drain() {
    for (let entry = this.offered.get(this.next); entry && !this.broken && !this.signal.aborted; entry = this.offered.get(this.next)) {
      this.offered.delete(this.next);
      try {
        const frame = await Frame.findByPk(entry.frameId);
        if (!frame) throw new Error("removed");
        const t = frame.timeS ?? this.next / this.frameRateFps;
        this.following.follower.add(t, await greyFrame(await store().localPath(frameKey(frame), this.scratch)));
        this.read.push({ sha256: entry.sha256, t });
      } catch {
        this.broken = true;
      }
      this.next += this.step;
    }
  }

  /** What was read so far and the rate from it, or null when the stream cannot stand for a pass. */
  async finish(): Promise<StreamedRate | null> {
    await this.chain;
    if (this.broken || this.signal.aborted || this.read.length === 0) return null;
    return { settingsKey: rateSettingsKey(this.settings), read: this.read, columns: rateResult(this.following) };
  }
}

export function startRateStream(settings: RateSettings, expected: number, frameRateFps: number, scratch: ScratchDir, signal: AbortSignal): RateStream | null {
  const following = startRateFollowing(settings);
  if (!("follower" in following)) return null;
  return new RateStream(following, settings, expected, frameRateFps, scratch, signal);
}
