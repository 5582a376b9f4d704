/**
 * Cuts a video into still frames in the browser: the browser's own decoder plays the file into a
 * canvas at the run's frame rate, and each frame keeps the video time it was taken at. Only the
 * frames travel to the server.
 */
export interface CutFrame {
  file: File;
  timeS: number;
}

function once(target: HTMLVideoElement, event: string): Promise<void> {
  return new Promise((resolve, reject) => {
    const ok = () => {
      target.removeEventListener("error", fail);
      resolve();
    };
    const fail = () => {
      target.removeEventListener(event, ok);
      reject(new Error("The browser could not decode this video. Try an MP4 (H.264) or WebM file, or a frame stack."));
    };
    target.addEventListener(event, ok, { once: true });
    target.addEventListener("error", fail, { once: true });
  });
}

export async function cutVideoIntoFrames(
  video: File,
  fps: number,
  maxFrames: number,
  onProgress: (done: number, total: number) => void,
  signal?: AbortSignal,
): Promise<CutFrame[]> {
  if (!(fps > 0)) throw new Error("Set the run's frame rate before bringing a video.");
  const url = URL.createObjectURL(video);
  const el = document.createElement("video");
  el.muted = true;
  el.preload = "auto";
  el.src = url;
  try {
    await once(el, "loadeddata");
    const duration = el.duration;
    if (!Number.isFinite(duration) || duration <= 0) throw new Error("The video reports no length; the browser cannot cut it.");
    const total = Math.min(Math.floor(duration * fps + 1e-6), maxFrames);
    const canvas = document.createElement("canvas");
    canvas.width = el.videoWidth;
    canvas.height = el.videoHeight;
    const ctx = canvas.getContext("2d");
    if (!ctx) throw new Error("This browser cannot draw video frames.");
    const base = video.name.replace(/\.[^.]+$/, "").replace(/[^a-zA-Z0-9_-]+/g, "_") || "video";
    const frames: CutFrame[] = [];
    for (let i = 0; i < total; i++) {
      if (signal?.aborted) throw new Error("Cutting the video was stopped.");
      const wanted = i / fps;
      el.currentTime = Math.min(wanted, duration - 1e-3);
      await once(el, "seeked");
      ctx.drawImage(el, 0, 0);
      const blob = await new Promise<Blob | null>((resolve) => canvas.toBlob(resolve, "image/jpeg", 0.92));
      if (!blob) throw new Error("A frame could not be encoded.");
      const timeS = el.currentTime;
      frames.push({ file: new File([blob], `${base}_${String(i).padStart(5, "0")}.jpg`, { type: "image/jpeg" }), timeS });
      onProgress(i + 1, total);
    }
    return frames;
  } finally {
    URL.revokeObjectURL(url);
    el.removeAttribute("src");
    el.load();
  }
}
