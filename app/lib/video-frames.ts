/**
 * The bookkeeping of cutting a video into frames by what the decoder presents: each presented
 * frame is offered with its own media time and the decoder's running count of presented frames;
 * the same picture twice is ignored, and a frame the count says was presented but never offered
 * (or one the decoder dropped) is a gap, after which the cut must be redone more slowly.
 * Pure: the browser part lives beside the upload component.
 */

export type FrameOffer = { kind: "new"; index: number; timeS: number } | { kind: "repeat" } | { kind: "gap"; reason: string };

export class FrameTimeline {
  readonly times: number[] = [];
  private lastPresented: number | null = null;
  private droppedAtStart: number | null = null;

  /**
   * @param mediaTimeS the presented frame's own time (requestVideoFrameCallback's mediaTime)
   * @param presentedFrames the decoder's count of frames presented so far
   * @param droppedFrames the decoder's count of frames dropped so far (getVideoPlaybackQuality)
   */
  offer(mediaTimeS: number, presentedFrames: number, droppedFrames = 0): FrameOffer {
    if (!Number.isFinite(mediaTimeS) || mediaTimeS < 0) return { kind: "gap", reason: `the decoder gave a frame time of ${mediaTimeS}` };
    if (this.droppedAtStart === null) this.droppedAtStart = droppedFrames;
    if (droppedFrames > this.droppedAtStart) return { kind: "gap", reason: `the decoder dropped ${droppedFrames - this.droppedAtStart} frame(s)` };
    const last = this.times.at(-1);
    // The same picture presented again (a repaint, or the first frame shown before and after play).
    if (last !== undefined && Math.abs(mediaTimeS - last) < 1e-6) {
      this.lastPresented = presentedFrames;
      return { kind: "repeat" };
    }
    if (last !== undefined && mediaTimeS < last) return { kind: "gap", reason: `frame times went backwards (${mediaTimeS} s after ${last} s)` };
    if (this.lastPresented !== null && presentedFrames - this.lastPresented > 1) {
      return { kind: "gap", reason: `${presentedFrames - this.lastPresented - 1} frame(s) were shown without being taken` };
    }
    this.lastPresented = presentedFrames;
    this.times.push(mediaTimeS);
    return { kind: "new", index: this.times.length - 1, timeS: mediaTimeS };
  }

  /** A frame count the container or the decoder states, checked against what was taken. */
  check(expectedFrames: number | null): string | null {
    if (expectedFrames === null || !Number.isFinite(expectedFrames)) return null;
    if (expectedFrames !== this.times.length) return `the decoder counted ${expectedFrames} frames but ${this.times.length} were taken`;
    return null;
  }
}

/** The playback rates to try, fastest first: each gap slows the cut, down to a tenth of real time (a busy machine misses frames at a quarter). */
export const cuttingRates = [1, 0.5, 0.25, 0.1] as const;

/** File name of the i-th frame cut from a video: the video's name, made safe, and a zero-padded index. */
export function cutFrameName(videoName: string, index: number): string {
  const base =
    videoName
      .replace(/\.[^.]+$/, "")
      .replace(/[^a-zA-Z0-9_-]+/g, "_")
      .slice(0, 200) || "video";
  return `${base}_${String(index).padStart(5, "0")}.jpg`;
}

/** Longest time a frame may carry, s (about 28 hours): anything longer is not a lab video. */
export const maxFrameTimeS = 1e5;

/** Reads a frame time sent with an upload; null when none was sent, or the message why it is refused. */
export function parseFrameTime(raw: unknown): { ok: true; timeS: number | null } | { ok: false; message: string } {
  if (raw === null || raw === undefined || raw === "") return { ok: true, timeS: null };
  if (typeof raw !== "string") return { ok: false, message: "The frame time must be a number of seconds, sent as a form field." };
  const text = raw.trim();
  if (!/^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/.test(text)) return { ok: false, message: `The frame time "${raw.slice(0, 40)}" is not a number of seconds.` };
  const timeS = Number(text);
  if (!Number.isFinite(timeS)) return { ok: false, message: "The frame time must be a finite number of seconds." };
  if (timeS < 0) return { ok: false, message: `The frame time ${timeS} s is before the start; frame times are 0 s or more.` };
  if (timeS >= maxFrameTimeS) return { ok: false, message: `The frame time ${timeS} s is beyond ${maxFrameTimeS} s; no lab video is that long.` };
  return { ok: true, timeS };
}
