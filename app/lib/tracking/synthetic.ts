/**
 * Rendered frame stacks with known tracer positions: for the accuracy tests, the benchmark and
 * the demo runs. Pure: frames come back as RGB bytes, encoding and storage are the caller's. What
 * a stack shows and where its tracers are is synthetic-spec.ts; this module draws it.
 */
import { seededRandom } from "../random";
import { type Rgb, type SyntheticFrame, type SyntheticRunSpec, tableToView, tracerPosition } from "./synthetic-spec";

export type { Rgb, SyntheticFrame, SyntheticPath, SyntheticRunSpec, SyntheticTracer } from "./synthetic-spec";
export { pathPosition, syntheticTimes, tableToView, tracerPosition } from "./synthetic-spec";

const tableColour: Rgb = [118, 108, 96];
const rimColour: Rgb = [40, 42, 46];
const markColour: Rgb = [25, 25, 30];
const defaultWater: Rgb = [62, 74, 84];

function gaussianTable(seed: number, size: number): Float32Array {
  const random = seededRandom(seed);
  const table = new Float32Array(size);
  for (let i = 0; i < size; i += 2) {
    const u = Math.max(random(), 1e-12);
    const v = random();
    const r = Math.sqrt(-2 * Math.log(u));
    table[i] = r * Math.cos(2 * Math.PI * v);
    if (i + 1 < size) table[i + 1] = r * Math.sin(2 * Math.PI * v);
  }
  return table;
}

/**
 * Brightness of the lab-fixed surroundings by direction (radians, counterclockwise from x seen
 * from above): a few smooth features of different widths, like doors, shelves and lamps.
 */
export function surroundingsPattern(seed: number): (angle: number) => number {
  const random = seededRandom(seed ^ 0x0f00d);
  const terms = Array.from({ length: 12 }, (_, i) => ({ k: 2 + i * 3 + Math.floor(random() * 3), phase: 2 * Math.PI * random(), a: 0.5 + random() }));
  const size = 8192;
  const table = new Float32Array(size + 1);
  for (let i = 0; i <= size; i++) {
    const a = (2 * Math.PI * i) / size;
    let v = 0;
    for (const term of terms) v += term.a * Math.sin(term.k * a + term.phase);
    table[i] = 130 + 14 * v;
  }
  return (angle) => {
    const u = ((((angle / (2 * Math.PI)) % 1) + 1) % 1) * size;
    const i = Math.floor(u);
    const f = u - i;
    return table[i]! * (1 - f) + table[i + 1]! * f;
  };
}

export interface SyntheticRenderer {
  frame(index: number): SyntheticFrame;
}

export function createSyntheticRenderer(spec: SyntheticRunSpec): SyntheticRenderer {
  const { width: w, height: h } = spec;
  if (!(w > 0 && h > 0 && spec.frames > 0 && spec.fps > 0)) throw new Error("A synthetic run needs a size, frames and a frame rate.");
  const water = spec.water ?? defaultWater;
  const noiseSigma = spec.noiseSigma ?? 3;
  const gradient = spec.illuminationGradient ?? 0.25;
  const seed = spec.seed ?? 1;
  const noise = gaussianTable(seed ^ 0x5eed, 1 << 16);
  const marksTurn = spec.camera === "lab";
  const markRadiusPx = Math.max(2, spec.tankRadiusPx * 0.02);
  const markAt = [0, 1, 2, 3].map((i) => {
    const a = Math.PI / 4 + (i * Math.PI) / 2;
    const r = (0.85 * spec.tankRadiusPx) / spec.pxPerM;
    return { x: r * Math.cos(a), y: r * Math.sin(a) };
  });

  // The scene without marks or tracers: table, rim and water.
  const scene = new Float32Array(w * h * 3);
  const rimWidth = Math.max(3, spec.tankRadiusPx * 0.03);
  for (let row = 0; row < h; row++) {
    for (let col = 0; col < w; col++) {
      const d = Math.hypot(col - spec.centre.x, row - spec.centre.y);
      const c = d < spec.tankRadiusPx ? water : d < spec.tankRadiusPx + rimWidth ? rimColour : tableColour;
      const p = (row * w + col) * 3;
      scene[p] = c[0];
      scene[p + 1] = c[1];
      scene[p + 2] = c[2];
    }
  }
  const drawMarks = (target: Float32Array, t: number) => {
    for (const m of markAt) {
      const at = tableToView(spec, m, t);
      stamp(at.x, at.y, markRadiusPx + 2, (p, dx, dy) => {
        const cover = Math.min(1, Math.max(0, markRadiusPx + 0.5 - Math.hypot(dx, dy)));
        for (let c = 0; c < 3; c++) target[p + c]! += (markColour[c]! - target[p + c]!) * cover;
      });
    }
  };
  const stamp = (x: number, y: number, reach: number, paint: (p: number, dx: number, dy: number) => void) => {
    const r0 = Math.max(0, Math.floor(y - reach));
    const r1 = Math.min(h - 1, Math.ceil(y + reach));
    const c0 = Math.max(0, Math.floor(x - reach));
    const c1 = Math.min(w - 1, Math.ceil(x + reach));
    for (let row = r0; row <= r1; row++) {
      for (let col = c0; col <= c1; col++) paint((row * w + col) * 3, col - x, row - y);
    }
  };
  if (spec.tankMarks !== false && !marksTurn) drawMarks(scene, 0);

  // The table's own mark: a light disc on the table top outside the rim, with a dark dot off its
  // centre so that its turning shows.
  const tableMark = spec.tableMark ?? null;
  const tableMarkAt = tableMark
    ? { x: (tableMark.radiusPx / spec.pxPerM) * Math.cos(tableMark.angle), y: (tableMark.radiusPx / spec.pxPerM) * Math.sin(tableMark.angle) }
    : null;
  const drawTableMark = (target: Float32Array, t: number) => {
    if (!tableMark || !tableMarkAt) return;
    const at = tableToView(spec, tableMarkAt, t);
    const dotOffset = tableToView(
      spec,
      { x: tableMarkAt.x * (1 + (0.4 * tableMark.sizePx) / tableMark.radiusPx), y: tableMarkAt.y * (1 + (0.4 * tableMark.sizePx) / tableMark.radiusPx) },
      t,
    );
    const r = tableMark.sizePx;
    stamp(at.x, at.y, r + 2, (p, dx, dy) => {
      const cover = Math.min(1, Math.max(0, r + 0.5 - Math.hypot(dx, dy)));
      for (let c = 0; c < 3; c++) target[p + c]! += (235 - target[p + c]!) * cover;
    });
    stamp(dotOffset.x, dotOffset.y, r / 3 + 2, (p, dx, dy) => {
      const cover = Math.min(1, Math.max(0, r / 3 + 0.5 - Math.hypot(dx, dy)));
      for (let c = 0; c < 3; c++) target[p + c]! += (markColour[c]! - target[p + c]!) * cover;
    });
  };
  if (!marksTurn) drawTableMark(scene, 0);

  // The room beyond the table, fixed in the lab: its pixels and their directions, drawn per frame
  // for a co-rotating camera (it turns past at −Ω) and once for a lab-fixed one.
  const roomFrom = spec.surroundingsFromPx ?? null;
  const room = roomFrom === null ? null : { pattern: surroundingsPattern(seed), pixels: [] as number[], angles: [] as number[] };
  if (room && roomFrom !== null) {
    for (let row = 0; row < h; row++) {
      for (let col = 0; col < w; col++) {
        if (Math.hypot(col - spec.centre.x, row - spec.centre.y) < roomFrom) continue;
        const dx = col - spec.centre.x;
        room.pixels.push((row * w + col) * 3);
        room.angles.push(Math.atan2(-(row - spec.centre.y), spec.mirrored ? -dx : dx));
      }
    }
  }
  const drawRoom = (target: Float32Array, t: number) => {
    if (!room) return;
    // A lab-fixed direction φ is seen at φ − Ωt by a co-rotating camera; the pixel at φ shows φ + Ωt.
    const turn = spec.camera === "rotating" ? spec.omega * t : 0;
    for (let i = 0; i < room.pixels.length; i++) {
      const v = room.pattern(room.angles[i]! + turn);
      const p = room.pixels[i]!;
      target[p] = v;
      target[p + 1] = v * 0.97;
      target[p + 2] = v * 0.92;
    }
  };
  if (spec.camera === "lab") drawRoom(scene, 0);

  const light = new Float32Array(w * h);
  const glare = new Float32Array(w * h);
  for (let row = 0; row < h; row++) {
    for (let col = 0; col < w; col++) {
      const p = row * w + col;
      light[p] = 1 + gradient * (col / Math.max(1, w - 1) - 0.5) + 0.4 * gradient * (row / Math.max(1, h - 1) - 0.5);
      if (spec.glare) {
        const g = spec.glare;
        const q = ((col - g.x) ** 2 + (row - g.y) ** 2) / (g.radiusPx * g.radiusPx);
        glare[p] = q < 25 ? g.strength * Math.exp(-q / 2) : 0;
      }
    }
  }
  const work = new Float32Array(scene.length);

  return {
    frame(index) {
      const t = index / spec.fps;
      work.set(scene);
      if (spec.tankMarks !== false && marksTurn) drawMarks(work, t);
      if (marksTurn) drawTableMark(work, t);
      if (spec.camera === "rotating") drawRoom(work, t);
      const truth: { x: number; y: number }[] = [];
      for (const tracer of spec.tracers) {
        const at = tracerPosition(spec, tracer, t);
        if (tracer.kind === "dye") {
          const ahead = tracerPosition(spec, tracer, t + 1e-3);
          const heading = Math.atan2(ahead.y - at.y, ahead.x - at.x) + (tracer.turnRadPerS ?? 0) * t;
          const ca = Math.cos(heading);
          const sa = Math.sin(heading);
          const spread = 1 + (tracer.spreadPerS ?? 0) * t;
          const sAlong = tracer.sigmaAlongPx * spread * (1 + (tracer.stretchPerS ?? 0) * t);
          const sAcross = tracer.sigmaAcrossPx * spread;
          let share = 0;
          let shareX = 0;
          let shareY = 0;
          stamp(at.x, at.y, 4 * Math.max(sAlong, sAcross), (p, dx, dy) => {
            const u = dx * ca + dy * sa;
            const v = -dx * sa + dy * ca;
            const alpha = tracer.opacity * Math.exp(-0.5 * ((u / sAlong) ** 2 + (v / sAcross) ** 2));
            share += alpha;
            shareX += alpha * dx;
            shareY += alpha * dy;
            for (let c = 0; c < 3; c++) work[p + c]! += (tracer.colour[c]! - work[p + c]!) * alpha;
          });
          truth.push(share > 0 ? { x: at.x + shareX / share, y: at.y + shareY / share } : at);
        } else {
          truth.push(at);
          const s2 = 2 * tracer.sigmaPx * tracer.sigmaPx;
          stamp(at.x, at.y, 5 * tracer.sigmaPx, (p, dx, dy) => {
            const add = tracer.brightness * Math.exp(-(dx * dx + dy * dy) / s2);
            work[p]! += add;
            work[p + 1]! += add;
            work[p + 2]! += add;
          });
        }
      }
      const data = new Uint8Array(w * h * 3);
      let state = (Math.imul(seed, 0x9e3779b1) ^ Math.imul(index + 1, 0x85ebca6b)) >>> 0 || 1;
      for (let p = 0, q = 0; p < w * h; p++, q += 3) {
        const lit = light[p]!;
        // + 0.5 so that truncating to a byte below rounds.
        const shine = glare[p]! + 0.5;
        // Two xorshift steps give four 16-bit indices into the Gaussian table; three are used.
        state ^= state << 13;
        state ^= state >>> 17;
        state ^= state << 5;
        const first = state >>> 0;
        state ^= state << 13;
        state ^= state >>> 17;
        state ^= state << 5;
        const r = work[q]! * lit + shine + noiseSigma * noise[first & 0xffff]!;
        const g = work[q + 1]! * lit + shine + noiseSigma * noise[first >>> 16]!;
        const b = work[q + 2]! * lit + shine + noiseSigma * noise[state & 0xffff]!;
        data[q] = r <= 0 ? 0 : r >= 255 ? 255 : r | 0;
        data[q + 1] = g <= 0 ? 0 : g >= 255 ? 255 : g | 0;
        data[q + 2] = b <= 0 ? 0 : b >= 255 ? 255 : b | 0;
      }
      return { index, t, width: w, height: h, channels: 3, data, truth };
    },
  };
}

/** Renders every frame in order, awaiting the caller (to encode or store it) before the next. */
export async function renderRunFrames(spec: SyntheticRunSpec, onFrame: (frame: SyntheticFrame) => void | Promise<void>): Promise<void> {
  const renderer = createSyntheticRenderer(spec);
  for (let i = 0; i < spec.frames; i++) await onFrame(renderer.frame(i));
}
