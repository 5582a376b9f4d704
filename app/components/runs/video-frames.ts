/**
 * Cuts a video into still frames in the browser by the frames the browser's decoder presents:
 * the video plays (muted, at most at its own speed) and pauses on every new frame
 * (requestVideoFrameCallback), the frame is drawn into a canvas and keeps its own media time.
 * A frame shown twice is taken once; a frame skipped or dropped makes the cut start again at a
 * lower rate. Only the frames travel to the server.
 */
import { cutFrameName, cuttingRates, FrameTimeline } from "~/lib/video-frames";

export interface CutFrame {
  file: File;
  timeS: number;
}

type FrameCallback = (now: number, metadata: { mediaTime: number; presentedFrames: number }) => void;
type VideoWithFrames = HTMLVideoElement & { requestVideoFrameCallback(cb: FrameCallback): number; cancelVideoFrameCallback(id: number): void };

const undecodable = "The browser could not decode this video. Try an MP4 (H.264) or WebM file, or a frame stack.";

function once(target: HTMLVideoElement, event: string): Promise<void> {
  return new Promise((resolve, reject) => {
    const ok = () => {
      target.removeEventListener("error", fail);
      resolve();
    };
    const fail = () => {
      target.removeEventListener(event, ok);
      reject(new Error(undecodable));
    };
    target.addEventListener(event, ok, { once: true });
    target.addEventListener("error", fail, { once: true });
  });
}

class Gap extends Error {}

function dropped(el: HTMLVideoElement) {
  return el.getVideoPlaybackQuality?.().droppedVideoFrames ?? 0;
}

/** Frames the decoder has put out so far (presented or dropped), where the browser says. */
function decoded(el: HTMLVideoElement): number | null {
  const q = el.getVideoPlaybackQuality?.();
  return q ? q.totalVideoFrames : null;
}

/** One pass through the video at one playback rate; throws Gap when a frame was missed. */
async function onePass(
  el: VideoWithFrames,
  video: File,
  rate: number,
  maxFrames: number,
  onProgress: (done: number) => void,
  signal?: AbortSignal,
): Promise<CutFrame[]> {
  const canvas = document.createElement("canvas");
  canvas.width = el.videoWidth;
  canvas.height = el.videoHeight;
  const ctx = canvas.getContext("2d");
  if (!ctx) throw new Error("This browser cannot draw video frames.");
  el.pause();
  el.playbackRate = rate;
  const timeline = new FrameTimeline();
  const frames: CutFrame[] = [];

  return new Promise<CutFrame[]>((resolve, reject) => {
    let finished = false;
    let pending = 0;
    let ended = false;
    let callbackId = 0;
    let watchdog = 0;
    // A decoder that stops presenting frames (a stalled or broken file) ends the cut with a reason, not a hang.
    const watch = () => {
      window.clearTimeout(watchdog);
      watchdog = window.setTimeout(() => {
        if (pending === 0)
          finish(new Error(`The video stopped giving frames after ${frames.length}; it may be damaged. Try another export of it, or a frame stack.`));
      }, 15_000);
    };
    const countAtStart = decoded(el);
    // At the natural end, the decoder's own count of frames must be what was taken. Its counters
    // are updated a little late, so a count below is waited for (up to 2 s); a count above is a gap.
    const finishAtEnd = async () => {
      if (countAtStart !== null) {
        for (let waited = 0; ; waited += 100) {
          const count = (decoded(el) ?? 0) - countAtStart;
          if (count > timeline.times.length) return finish(new Gap(timeline.check(count) ?? "a frame was missed"));
          if (count === timeline.times.length || waited >= 2000) break;
          await new Promise((r) => window.setTimeout(r, 100));
        }
      }
      finish();
    };
    const finish = (err?: Error) => {
      if (finished) return;
      finished = true;
      window.clearTimeout(watchdog);
      el.cancelVideoFrameCallback(callbackId);
      el.removeEventListener("ended", onEnded);
      el.removeEventListener("error", onError);
      el.pause();
      if (err) reject(err);
      else resolve(frames);
    };
    const resume = () => {
      if (finished) return;
      if (ended) {
        void finishAtEnd();
        return;
      }
      watch();
      el.cancelVideoFrameCallback(callbackId);
      callbackId = el.requestVideoFrameCallback(onFrame);
      el.play().catch((err: unknown) => finish(err instanceof Error ? err : new Error(String(err))));
    };
    const onFrame: FrameCallback = (_now, meta) => {
      if (finished) return;
      // Hold the clock while this frame is taken, so the next one cannot be skipped meanwhile.
      el.pause();
      if (signal?.aborted) return finish(new Error("Cutting the video was stopped."));
      const offer = timeline.offer(meta.mediaTime, meta.presentedFrames, dropped(el));
      if (offer.kind === "gap") return finish(new Gap(offer.reason));
      if (offer.kind === "repeat") return resume();
      if (frames.length >= maxFrames) return finish();
      ctx.drawImage(el, 0, 0);
      pending++;
      canvas.toBlob(
        (blob) => {
          pending--;
          if (finished) return;
          if (!blob) return finish(new Error("A frame could not be encoded."));
          frames[offer.index] = { file: new File([blob], cutFrameName(video.name, offer.index), { type: "image/jpeg" }), timeS: offer.timeS };
          onProgress(frames.length);
          resume();
        },
        "image/jpeg",
        0.95,
      );
    };
    const onEnded = () => {
      ended = true;
      // The last frame's callback can come after "ended"; give it a moment before closing the cut.
      window.setTimeout(() => {
        if (pending === 0) void finishAtEnd();
      }, 250);
    };
    const onError = () => finish(new Error(undecodable));
    el.addEventListener("ended", onEnded);
    el.addEventListener("error", onError);
    // Seeking to the start presents the first frame while paused; its callback starts the playing.
    watch();
    callbackId = el.requestVideoFrameCallback(onFrame);
    el.currentTime = 0;
    // Should the seek not present a frame (already shown), start playing anyway; the first played frame is then the first.
    el.addEventListener(
      "seeked",
      () =>
        window.setTimeout(() => {
          if (!finished && timeline.times.length === 0 && pending === 0 && el.paused) resume();
        }, 500),
      { once: true },
    );
  });
}

export async function cutVideoIntoFrames(
  video: File,
  maxFrames: number,
  onProgress: (done: number, total: number) => void,
  signal?: AbortSignal,
): Promise<CutFrame[]> {
  const el = document.createElement("video") as VideoWithFrames;
  if (typeof el.requestVideoFrameCallback !== "function")
    throw new Error("This browser cannot cut videos frame by frame; use a current Chrome, Edge, Safari or Firefox, or bring a frame stack.");
  const url = URL.createObjectURL(video);
  el.muted = true;
  el.playsInline = true;
  el.preload = "auto";
  // In the page (barely visible) so the browser presents its frames as it would for any video.
  el.style.cssText = "position:fixed;right:0;bottom:0;width:2px;height:2px;opacity:0.01;pointer-events:none";
  document.body.appendChild(el);
  el.src = url;
  try {
    await once(el, "loadeddata");
    const duration = el.duration;
    if (!Number.isFinite(duration) || duration <= 0) throw new Error("The video reports no length; the browser cannot cut it.");
    let lastGap = "";
    for (const rate of cuttingRates) {
      try {
        return await onePass(el, video, rate, maxFrames, (done) => onProgress(done, 0), signal);
      } catch (err) {
        if (!(err instanceof Gap)) throw err;
        lastGap = err.message;
      }
    }
    throw new Error(
      `The browser kept missing frames of this video (${lastGap}), even at a tenth of its speed. Close other tabs and try again, or bring a frame stack.`,
    );
  } finally {
    URL.revokeObjectURL(url);
    el.removeAttribute("src");
    el.load();
    el.remove();
  }
}
