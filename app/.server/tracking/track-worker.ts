/**
 * Worker-thread entry of the tracking pool: takes a frame's crop (or the background samples),
 * calls the tracking library, hands the result back. No files, no database.
 */
import { createRequire } from "node:module";
import { medianInto } from "../../lib/tracking/background";
import { createDetector, type Detector } from "../../lib/tracking/detect";
import type { OpenCv } from "../../lib/tracking/opencv-types";
import type { DetectionPlan } from "../../lib/tracking/plan";
import type { Detection } from "../../lib/tracking/types";

export type TrackTask =
  | {
      kind: "detect";
      plan: DetectionPlan;
      planKey: string;
      image: Uint8Array;
      background: Uint8Array | null;
    }
  | {
      /** Median of the sampled frames for pixels [from, to), written into the shared `out`. */
      kind: "background";
      samples: Uint8Array;
      count: number;
      out: Uint8Array;
      from: number;
      to: number;
    }
  | { kind: "warm-up" };

export type TrackTaskResult = Detection[] | null;

const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };

/**
 * Detectors keep their OpenCV matrices between frames of one plan. Two jobs may share the pool,
 * so a couple are kept; the oldest is freed when a third plan arrives.
 */
const detectors = new Map<string, Detector>();
const keptDetectors = 2;

function detectorFor(key: string, plan: DetectionPlan): Detector {
  let detector = detectors.get(key);
  if (detector) {
    detectors.delete(key);
  } else {
    detector = createDetector(cv, plan);
    if (detectors.size >= keptDetectors) {
      const [oldestKey, oldest] = detectors.entries().next().value as [string, Detector];
      oldest.dispose();
      detectors.delete(oldestKey);
    }
  }
  detectors.set(key, detector);
  return detector;
}

export default function runTrackTask(task: TrackTask): TrackTaskResult {
  // Loading the worker (tsx, OpenCV) is the cost; a job starts the workers while it decodes.
  if (task.kind === "warm-up") return null;
  if (task.kind === "background") {
    const length = task.out.length;
    const frames = Array.from({ length: task.count }, (_, j) => task.samples.subarray(j * length, (j + 1) * length));
    medianInto(frames, task.out, task.from, task.to);
    return null;
  }
  const { plan } = task;
  return detectorFor(task.planKey, plan).detect(
    { data: task.image, width: plan.crop.width, height: plan.crop.height, channels: plan.channels },
    task.background,
  );
}
