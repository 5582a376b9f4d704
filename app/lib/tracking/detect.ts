/**
 * Finding the tracer in one frame.
 *
 * Float: difference from the median background (bright float on darker water). Dye: the change
 * of colour against the stack's colour background (dye-signal.ts), or, without one, the HSV colour
 * range. Either way a detection image (blocks of `plan.shrink` px averaged) is thresholded (threshold.ts),
 * cleaned with an opening and a closing, and split into blobs; blobs are kept by area and
 * roundness. The centroid of each blob is then weighted by the un-thresholded signal (difference
 * or saturation) at full resolution, less a noise floor, which keeps it sub-pixel. A dye blob
 * found against the background is instead measured over the whole patch (dye-centre.ts), kept
 * when its colour changes towards a hue of the plan's range, and dropped when it changes the
 * colour less than half as much as the strongest patch of the frame: a dye's coloured shadow on
 * the bottom, lit by only part of the light, is such a weaker copy of it.
 */
import { type Blob, createBlobFinder } from "./blob-finder";
import { createDyeCentre } from "./dye-centre";
import { blobStrength, createColourNoise, distinctPatches, shadowShare } from "./dye-patches";
import { floatCentre } from "./float-centre";
import { hsv, hueInRange } from "./hsv";
import type { CvRect, OpenCv } from "./opencv-types";
import type { DetectionPlan } from "./plan";
import { noiseColumnStride, noiseRowStride, robustStats } from "./robust-stats";
import { rowSpans } from "./plan-crop";
import { createThreshold, type SearchWindow } from "./threshold";
import type { Detection } from "./types";

export interface FrameImage {
  data: Uint8Array;
  width: number;
  height: number;
  /** Interleaved channels per pixel. */
  channels: number;
}

export interface Detector {
  /**
   * `image` is the plan's crop with the plan's channels; `background` the stack's still scene of
   * the same crop and channels: needed for floats; for dye it moves the centre from the colour
   * threshold's blob to the whole patch (dye-centre.ts).
   *
   * With `windows` (where the tracers are expected, search-windows.ts) only those parts of the
   * frame are searched at first; what is found there is exactly what the whole search finds
   * there (threshold.ts). If a window holds no find, or a find lies too near a window's edge,
   * the whole frame is searched after all, so a window can make the search cheaper but never
   * change what it finds in the windows.
   *
   * A background is read as it is at its first use with this detector: one that changes must be
   * given as a new array (threshold.ts keeps a dye background's block sums per array).
   *
   * `still`: for dye, the stack's still background when `background` is composed for this frame
   * with a turning model (turning-background.ts); the bottom's level under the light is fitted to
   * it once instead of to every frame's new array (dye-patch-signal.ts).
   */
  detect(image: FrameImage, background: Uint8Array | null, windows?: readonly SearchWindow[], still?: Uint8Array): Detection[];
  /** Frees the OpenCV matrices: wasm memory is not garbage-collected. */
  dispose(): void;
}

/** Thresholds in noise units: detection well clear of noise, centroid weights just above it. */
const detectSigmas = 5;
const weightSigmas = 3;
const maxDetections = 50;
/** A float with more unreadable pixels than this share of its area is not placed (float-centre.ts). */
const hiddenShare = 0.25;

export function createDetector(cv: OpenCv, plan: DetectionPlan): Detector {
  const { smallWidth: sw, smallHeight: sh, shrink: k } = plan;
  const width = plan.crop.width;
  const height = plan.crop.height;
  if (sw < 3 || sh < 3) throw new Error("The searched region is too small to find a tracer in.");

  const { mask, labels, blobs, dispose: disposeBlobs } = createBlobFinder(cv, plan);
  const fullSpans = rowSpans(height, width, 1, 0, plan.tank);
  const smallSpans = rowSpans(sh, sw, k, (k - 1) / 2, plan.tank);
  const hist = new Uint32Array(511);
  const colourNoise = createColourNoise(width, height, fullSpans);
  const colour = new Float64Array(3);
  const threshold = createThreshold(plan, smallSpans, detectSigmas);
  const { hueMin, hueMax, satMin, valMin } = plan.dyeColour;
  const dyeCentre = plan.tracer === "dye" ? createDyeCentre(width, height, fullSpans, plan.dyeLight) : null;
  let disposed = false;

  function check(image: FrameImage, background: Uint8Array | null): void {
    if (disposed) throw new Error("This detector has been disposed.");
    if (image.width !== width || image.height !== height || image.channels !== plan.channels) {
      throw new Error(`Frame region is ${image.width}×${image.height}×${image.channels}, the plan expects ${width}×${height}×${plan.channels}.`);
    }
    if (plan.tracer === "float" && (!background || background.length !== width * height)) {
      throw new Error("Floats are found against a background of the same region.");
    }
    if (plan.tracer === "dye" && background && background.length !== width * height * 3) {
      throw new Error("A dye background must be the colour image of the same region.");
    }
  }

  /** Offset and noise of the float difference, or of the water's saturation for dye. */
  function noise(image: FrameImage, background: Uint8Array | null): { median: number; sigma: number } {
    hist.fill(0);
    const img = image.data;
    for (let row = 0; row < height; row += noiseRowStride) {
      const a = fullSpans[2 * row]!;
      const b = fullSpans[2 * row + 1]!;
      for (let col = a; col < b; col += noiseColumnStride) {
        const p = row * width + col;
        if (background) {
          hist[img[p]! - background[p]! + 255]!++;
        } else {
          hsv(img[3 * p]!, img[3 * p + 1]!, img[3 * p + 2]!, colour);
          hist[Math.round(colour[1]!)]!++;
        }
      }
    }
    return robustStats(hist, background ? 255 : 0);
  }

  /** A float's centre from its share of each pixel (float-centre.ts); dye found by colour alone, its saturation-weighted centroid. */
  function centroid(blob: Blob, image: FrameImage, background: Uint8Array | null, offset: number, sigma: number): Detection | null {
    const lab = labels.data;
    const img = image.data;
    const margin = k + 2;
    const row0 = Math.max(0, blob.rect.y * k - margin);
    const row1 = Math.min(height, (blob.rect.y + blob.rect.height) * k + margin);
    const col0 = Math.max(0, blob.rect.x * k - margin);
    const col1 = Math.min(width, (blob.rect.x + blob.rect.width) * k + margin);
    if (background) {
      // A float: its share of each pixel, unbiased by lines and shadow under it, mirrored where glare hides it (float-centre.ts).
      const found = floatCentre({
        image: img,
        background,
        width,
        spans: fullSpans,
        col0,
        col1,
        row0,
        row1,
        free: (col, row) => {
          const owner = lab[Math.min(sh - 1, Math.floor(row / k)) * sw + Math.min(sw - 1, Math.floor(col / k))];
          return owner === 0 || owner === blob.label;
        },
        offset,
        sigma,
        floorSigmas: weightSigmas,
      });
      // A float largely hidden by glare as bright as its face: its visible part does not place it.
      if (!found || found.unknown > hiddenShare * blob.pixels) return null;
      return {
        x: plan.crop.left + found.x,
        y: plan.crop.top + found.y,
        area: blob.pixels,
        roundness: blob.roundness,
        intensity: Math.min(255, Math.round(found.peak)),
      };
    }
    const floor = Math.min(satMin, offset + weightSigmas * sigma);
    let sum = 0;
    let sumX = 0;
    let sumY = 0;
    let peak = 0;
    for (let row = row0; row < row1; row++) {
      const a = Math.max(col0, fullSpans[2 * row]!);
      const b = Math.min(col1, fullSpans[2 * row + 1]!);
      const labelRow = Math.min(sh - 1, Math.floor(row / k)) * sw;
      for (let col = a; col < b; col++) {
        const owner = lab[labelRow + Math.min(sw - 1, Math.floor(col / k))];
        if (owner !== 0 && owner !== blob.label) continue;
        const p = row * width + col;
        hsv(img[3 * p]!, img[3 * p + 1]!, img[3 * p + 2]!, colour);
        if (colour[2]! < valMin || !hueInRange(colour[0]!, hueMin, hueMax)) continue;
        const signal = colour[1]!;
        const w = signal - floor;
        if (w <= 0) continue;
        if (signal > peak) peak = signal;
        sum += w;
        sumX += w * col;
        sumY += w * row;
      }
    }
    if (sum <= 0) return null;
    return {
      x: plan.crop.left + sumX / sum,
      y: plan.crop.top + sumY / sum,
      area: blob.pixels,
      roundness: blob.roundness,
      intensity: Math.min(255, Math.round(peak)),
    };
  }

  /** A dye blob's centre from the whole patch against the background (dye-centre.ts). */
  function patchCentre(blob: Blob, image: FrameImage, background: Uint8Array, still: Uint8Array | undefined): Detection | null {
    if (!dyeCentre) return null;
    const margin = k + 2;
    const lab = labels.data;
    const found = dyeCentre(
      image,
      background,
      {
        col0: blob.rect.x * k - margin,
        row0: blob.rect.y * k - margin,
        col1: (blob.rect.x + blob.rect.width) * k + margin,
        row1: (blob.rect.y + blob.rect.height) * k + margin,
      },
      // The first estimate keeps to pixels no other blob holds: a stronger patch beside this one would draw it over.
      (col, row) => {
        const owner = lab[Math.min(sh - 1, Math.floor(row / k)) * sw + Math.min(sw - 1, Math.floor(col / k))];
        return owner === 0 || owner === blob.label;
      },
      still,
    );
    if (!found || !(found.x >= 0 && found.x <= width - 1 && found.y >= 0 && found.y <= height - 1)) return null;
    // The hue the colour changes towards: that of grey moved along the dye's direction (any step gives the same hue).
    hsv(128 + 100 * found.colour[0], 128 + 100 * found.colour[1], 128 + 100 * found.colour[2], colour);
    if (!hueInRange(colour[0]!, hueMin, hueMax)) return null;
    return {
      x: plan.crop.left + found.x,
      y: plan.crop.top + found.y,
      area: blob.pixels,
      roundness: blob.roundness,
      intensity: Math.min(255, Math.max(0, Math.round(found.peak))),
      spread: found.spread,
    };
  }

  return {
    detect(image, background, windows, still) {
      check(image, background);
      const bg = plan.tracer === "float" ? background : null;
      const dyeBackground = plan.tracer === "dye" ? background : null;
      // Dye against a background: the noise of its change of colour (dye-centre.ts measures its own for the centre).
      const { median, sigma } = dyeBackground ? colourNoise(image.data, dyeBackground) : noise(image, bg);
      const measure = (regions: CvRect[]): Detection[] => {
        let detections: Detection[] = [];
        if (regions.length === 0) return detections;
        if (dyeBackground) {
          // Only blobs at least `shadowShare` as strong as the frame's strongest are measured.
          const found = blobs(regions).map((blob) => ({
            blob,
            change: blobStrength({ labels: labels.data, width: sw, height: sh, shrink: k }, blob, image.data, dyeBackground, width, height),
          }));
          const strongest = found.reduce((most, f) => Math.max(most, f.change), 0);
          const patches: { detection: Detection; change: number }[] = [];
          for (const { blob, change } of found) {
            if (!(change >= shadowShare * strongest)) continue;
            const detection = patchCentre(blob, image, dyeBackground, still);
            if (detection) patches.push({ detection, change });
          }
          detections = distinctPatches(patches);
        } else {
          for (const blob of blobs(regions)) {
            const d = centroid(blob, image, bg, median, sigma);
            if (d) detections.push(d);
          }
        }
        detections.sort((a, b) => b.intensity * b.area - a.intensity * a.area);
        detections.length = Math.min(detections.length, maxDetections);
        return detections;
      };
      if (windows && windows.length > 0) {
        const regions = threshold.run(mask.data, image, bg ?? dyeBackground, median, sigma, threshold.windowTiles(windows));
        if (regions) {
          const found = measure(regions);
          const held = (w: SearchWindow) => found.some((d) => Math.abs(d.x - w.x) <= w.reach && Math.abs(d.y - w.y) <= w.reach);
          if (windows.every(held)) return found;
        }
      }
      return measure(threshold.run(mask.data, image, bg ?? dyeBackground, median, sigma) ?? []);
    },
    dispose() {
      if (disposed) return;
      disposed = true;
      disposeBlobs();
    },
  };
}
