/**
 * Where the detector looks in a frame: the plan's crop and channels of a frame already in memory
 * (as the decoder delivers them from a file), and per row the columns inside the tank edge.
 */
import type { FrameImage } from "./detect";
import type { DetectionPlan } from "./plan";

/** The decoder's crop and channel choice, for a frame already in memory (tests, demo seeding). */
export function cropForPlan(frame: FrameImage, plan: DetectionPlan): FrameImage {
  const { left, top, width, height } = plan.crop;
  const out = new Uint8Array(width * height * plan.channels);
  const ch = frame.channels;
  for (let row = 0; row < height; row++) {
    const src = ((top + row) * frame.width + left) * ch;
    const dst = row * width * plan.channels;
    if (plan.channels === 1) {
      // Floats are searched on the green channel alone, as the decoder delivers it.
      const green = ch >= 3 ? 1 : 0;
      for (let col = 0; col < width; col++) out[dst + col] = frame.data[src + col * ch + green]!;
    } else {
      for (let col = 0; col < width; col++) {
        const s = src + col * ch;
        const d = dst + col * 3;
        out[d] = frame.data[s]!;
        out[d + 1] = frame.data[s + 1]!;
        out[d + 2] = frame.data[s + 2]!;
      }
    }
  }
  return { data: out, width, height, channels: plan.channels };
}

/** Per row, the half-open column range inside the tank edge (pixel centres at `offset + i·step`). */
export function rowSpans(rows: number, cols: number, step: number, offset: number, tank: DetectionPlan["tank"]): Int32Array {
  const spans = new Int32Array(rows * 2);
  for (let r = 0; r < rows; r++) {
    if (!tank) {
      spans[2 * r] = 0;
      spans[2 * r + 1] = cols;
      continue;
    }
    const dy = offset + r * step - tank.cy;
    const half2 = tank.r * tank.r - dy * dy;
    if (half2 < 0) {
      spans[2 * r] = 0;
      spans[2 * r + 1] = 0;
      continue;
    }
    const half = Math.sqrt(half2);
    const a = Math.max(0, Math.ceil((tank.cx - half - offset) / step));
    const b = Math.min(cols, Math.floor((tank.cx + half - offset) / step) + 1);
    spans[2 * r] = a;
    spans[2 * r + 1] = Math.max(a, b);
  }
  return spans;
}
