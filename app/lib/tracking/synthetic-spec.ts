/**
 * What a rendered frame stack shows (synthetic.ts draws it): the run's settings, its tracers and
 * their paths, and where each tracer is at a time, in the table's frame and in the image. Pure.
 *
 * Geometry follows the theory check: paths are given in the rotating frame seen from above
 * (x right, y up, origin on the axis, metres); a lab-fixed view turns them, and the tank marks,
 * by +Ω t about the centre; a mirrored view flips x; image rows run downward.
 */
export type Rgb = [number, number, number];

export type SyntheticPath =
  | {
      /** Free float: x = xc + R e^(−r t) cos(−f t + φ), y = yc + R e^(−r t) sin(−f t + φ), f = 2Ω. */
      kind: "inertial-circle";
      centre: { x: number; y: number };
      radius: number;
      phase: number;
      /** Linear drag rate r, 1/s. */
      drag?: number;
    }
  | { kind: "line"; from: { x: number; y: number }; velocity: { x: number; y: number } }
  | { kind: "still"; at: { x: number; y: number } };

export type SyntheticTracer =
  | {
      kind: "float";
      path: SyntheticPath;
      /** Gaussian spot width, px. */
      sigmaPx: number;
      /** Peak brightness added over the water, grey levels. */
      brightness: number;
    }
  | {
      kind: "dye";
      path: SyntheticPath;
      /** Anisotropic Gaussian patch, stretched along the direction of motion. */
      sigmaAlongPx: number;
      sigmaAcrossPx: number;
      colour: Rgb;
      /** Peak share of dye colour over the water, 0–1 (the patch's contrast). */
      opacity: number;
      /** Slow change of shape: both widths grow by this fraction per second (the patch spreads). */
      spreadPerS?: number;
      /** The width along the long axis grows by this further fraction per second (it stretches). */
      stretchPerS?: number;
      /** The long axis turns by this much per second, rad, on top of following the motion. */
      turnRadPerS?: number;
    };

export interface SyntheticRunSpec {
  width: number;
  height: number;
  frames: number;
  fps: number;
  seed?: number;
  camera: "rotating" | "lab";
  /** Table rate, rad/s; positive is counterclockwise seen from above. */
  omega: number;
  /** Rotation centre, image px. */
  centre: { x: number; y: number };
  pxPerM: number;
  mirrored?: boolean;
  /** Inner radius of the tank, px, centred on the rotation centre. */
  tankRadiusPx: number;
  tracers: SyntheticTracer[];
  /** Sensor noise, grey levels RMS per channel. */
  noiseSigma?: number;
  /** Brightness change from the left edge to the right edge of the frame, as a fraction. */
  illuminationGradient?: number;
  /** A static reflection of the room lights, image px; null for none. */
  glare?: { x: number; y: number; radiusPx: number; strength: number } | null;
  water?: Rgb;
  /** Dark marks on the tank bottom that turn with the table. */
  tankMarks?: boolean;
  /** A light mark on the turntable's top outside the tank (turns with the table): for reading the rate from the footage. */
  tableMark?: { radiusPx: number; angle: number; sizePx: number } | null;
  /**
   * The room beyond the turntable, fixed in the lab: from this radius (px) outward the frame shows
   * lab-fixed features, which a co-rotating camera sees turn at −Ω. Null: the table fills the frame.
   */
  surroundingsFromPx?: number | null;
}

export interface SyntheticFrame {
  index: number;
  /** s */
  t: number;
  width: number;
  height: number;
  channels: 3;
  data: Uint8Array;
  /**
   * True centre of each tracer, image px, in the order of `spec.tracers`: a float's spot centre;
   * a dye patch's centre weighted by its dye share over the rendered pixels (the light, noise and
   * 8-bit rounding are not part of it).
   */
  truth: { x: number; y: number }[];
}

export function syntheticTimes(spec: SyntheticRunSpec): number[] {
  return Array.from({ length: spec.frames }, (_, i) => i / spec.fps);
}

/** Rotating-frame position of a path at time t, metres. */
export function pathPosition(path: SyntheticPath, omega: number, t: number): { x: number; y: number } {
  switch (path.kind) {
    case "inertial-circle": {
      const f = 2 * omega;
      const r = path.radius * Math.exp(-(path.drag ?? 0) * t);
      const angle = -f * t + path.phase;
      return { x: path.centre.x + r * Math.cos(angle), y: path.centre.y + r * Math.sin(angle) };
    }
    case "line":
      return { x: path.from.x + path.velocity.x * t, y: path.from.y + path.velocity.y * t };
    case "still":
      return { ...path.at };
  }
}

/** A point of the table (metres, rotating frame) at time t, in image px as this view sees it. */
export function tableToView(spec: SyntheticRunSpec, p: { x: number; y: number }, t: number): { x: number; y: number } {
  let { x, y } = p;
  if (spec.camera === "lab") {
    const a = spec.omega * t;
    const c = Math.cos(a);
    const s = Math.sin(a);
    [x, y] = [c * x - s * y, s * x + c * y];
  }
  if (spec.mirrored) x = -x;
  return { x: spec.centre.x + x * spec.pxPerM, y: spec.centre.y - y * spec.pxPerM };
}

export function tracerPosition(spec: SyntheticRunSpec, tracer: SyntheticTracer, t: number): { x: number; y: number } {
  return tableToView(spec, pathPosition(tracer.path, spec.omega, t), t);
}
