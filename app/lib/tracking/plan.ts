import type { DyeColour, DyeLight, TrackingSetup } from "./types";
import { formatFixed } from "../number-format";
import { turnRateInView, type TurnInView } from "./turning-background";
import { invert, multiply, type Mat3 } from "../projective/matrix";

/** The rectangle of the frame that is decoded and searched, full-frame px. */
export interface CropBox {
  left: number;
  top: number;
  width: number;
  height: number;
}

/**
 * How one frame stack is searched: worked out once from the view setup and the frame size,
 * then shared by the decoder (what to crop, which channels) and the detector.
 */
export interface DetectionPlan {
  tracer: TrackingSetup["tracer"];
  frameWidth: number;
  frameHeight: number;
  crop: CropBox;
  /** Channels the decoder delivers: the green channel alone for floats, RGB for dye. */
  channels: 1 | 3;
  /** Side of the pixel blocks averaged into the detection image (1 = full resolution). */
  shrink: number;
  smallWidth: number;
  smallHeight: number;
  /** Tank edge relative to the crop, px; null when the whole frame is searched. */
  tank: { cx: number; cy: number; r: number } | null;
  minAreaPx: number;
  maxAreaPx: number;
  minRoundness: number;
  dyeColour: DyeColour;
  /** How a dye's centre reads the difference from the background (dye-patch-signal.ts); absent: `encoded`. */
  dyeLight?: DyeLight;
  /**
   * What turns in the view about the rotation centre (crop px) and how fast, when the setup gives
   * the table's rate and a tank edge (for dye, only under a lab-fixed camera without tilt marks).
   * Null: the still background alone.
   */
  turn: TurnInView | null;
}

/** Any clearly saturated colour: water, the rim and glare are all close to grey. */
export const defaultDyeColour: DyeColour = { hueMin: 0, hueMax: 180, satMin: 100, valMin: 40 };

const defaultMinAreaPx = 12;
/** The detection image keeps a tracer at least this many blocks across, so opening cannot erase it. */
const minBlocksAcross = 4;
const maxShrink = 4;

export class ViewSetupError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "ViewSetupError";
  }
}

function finite(value: number): boolean {
  return typeof value === "number" && Number.isFinite(value);
}

export function planDetection(setup: TrackingSetup, frameWidth: number, frameHeight: number): DetectionPlan {
  if (setup.tracer !== "float" && setup.tracer !== "dye") {
    throw new ViewSetupError(`The tracer kind must be "float" or "dye", not "${String(setup.tracer)}".`);
  }
  let crop: CropBox = { left: 0, top: 0, width: frameWidth, height: frameHeight };
  let tank: DetectionPlan["tank"] = null;
  if (setup.tankEdge) {
    const { cx, cy, r } = setup.tankEdge;
    if (![cx, cy, r].every(finite) || r <= 0) {
      throw new ViewSetupError("The tank edge needs a centre and a radius greater than zero.");
    }
    const left = Math.max(0, Math.floor(cx - r));
    const top = Math.max(0, Math.floor(cy - r));
    const right = Math.min(frameWidth, Math.ceil(cx + r) + 1);
    const bottom = Math.min(frameHeight, Math.ceil(cy + r) + 1);
    if (right - left < 8 || bottom - top < 8) {
      throw new ViewSetupError(
        `The tank edge (centre ${formatFixed(cx, 0)}, ${formatFixed(cy, 0)}, radius ${formatFixed(r, 0)} px) lies outside the ${frameWidth}×${frameHeight} frame.`,
      );
    }
    crop = { left, top, width: right - left, height: bottom - top };
    tank = { cx: cx - left, cy: cy - top, r };
  }

  const searchedArea = tank ? Math.PI * tank.r * tank.r : frameWidth * frameHeight;
  const minAreaPx = setup.minAreaPx ?? defaultMinAreaPx;
  const maxAreaPx = setup.maxAreaPx ?? Math.max(minAreaPx * 4, searchedArea * 0.05);
  if (!(minAreaPx > 0) || !(maxAreaPx > minAreaPx)) {
    throw new ViewSetupError("The tracer's smallest area must be above zero and below its largest area.");
  }
  const minRoundness = setup.minRoundness ?? (setup.tracer === "float" ? 0.5 : 0.2);

  // Averaging blocks smaller than the tracer keeps it detectable and also raises its contrast
  // over sensor noise; the centroid is still taken at full resolution.
  const smallestDiameter = 2 * Math.sqrt(minAreaPx / Math.PI);
  const shrink = Math.max(1, Math.min(maxShrink, Math.floor(smallestDiameter / minBlocksAcross)));

  return {
    tracer: setup.tracer,
    frameWidth,
    frameHeight,
    crop,
    channels: setup.tracer === "float" ? 1 : 3,
    shrink,
    smallWidth: Math.floor(crop.width / shrink),
    smallHeight: Math.floor(crop.height / shrink),
    tank,
    minAreaPx,
    maxAreaPx,
    minRoundness,
    dyeColour: { ...defaultDyeColour, ...setup.dyeColour },
    // Only when asked for, so that a plan (and its key) is as before otherwise.
    ...(setup.dyeLight === "linear" ? { dyeLight: setup.dyeLight } : {}),
    turn: planTurn(setup, crop, tank),
  };
}

/**
 * The turning disc: centred on the rotation centre, as far as the tank edge and the crop allow
 * (a turned pixel must stay inside the tank and the crop). None for a table at rest or a rotation
 * centre outside the tank. For dye only under a lab-fixed camera, where the table's grid turns
 * through the view, and not under a tilted view's correction (its turning model is a factor on one
 * channel, turning-median.ts); under a co-rotating camera the turning light and glare measured
 * worse with the model than without (Decision 84).
 */
function planTurn(setup: TrackingSetup, crop: CropBox, tank: DetectionPlan["tank"]): TurnInView | null {
  const rotation = setup.rotation;
  if (!rotation || !tank || !finite(rotation.omega) || rotation.omega === 0) return null;
  // Dye: only the table's own pattern turning under a lab-fixed camera pays (Decision 84).
  if (setup.tracer === "dye" && (setup.correction || rotation.cameraMode !== "lab")) return null;
  if (!finite(setup.centre.x) || !finite(setup.centre.y)) return null;
  const cx = setup.centre.x - crop.left;
  const cy = setup.centre.y - crop.top;
  const rate = turnRateInView(rotation.omega, rotation.cameraMode, setup.mirrored);
  if (setup.correction) return rectifiedTurn(setup.correction, crop, tank, { x: cx, y: cy }, rate);
  const r = Math.min(tank.r - Math.hypot(cx - tank.cx, cy - tank.cy), cx - 1, cy - 1, crop.width - 2 - cx, crop.height - 2 - cy);
  if (!(r >= 8)) return null;
  return { cx, cy, r, rate };
}

/**
 * The turning disc of a tilted view (Decision 76): in the plane of the view correction moved to the
 * crop, about the rotation centre (which the correction keeps in place), as far as the tank edge and
 * the crop's border allow there.
 */
function rectifiedTurn(
  correction: Mat3,
  crop: CropBox,
  tank: NonNullable<DetectionPlan["tank"]>,
  centre: { x: number; y: number },
  rate: number,
): TurnInView | null {
  const shift = (dx: number, dy: number): Mat3 => [
    [1, 0, dx],
    [0, 1, dy],
    [0, 0, 1],
  ];
  const H = multiply(shift(-crop.left, -crop.top), multiply(correction, shift(crop.left, crop.top)));
  const Hinv = invert(H);
  if (!Hinv || !H.flat().every(finite) || !Hinv.flat().every(finite)) return null;
  const toPlane = (x: number, y: number): { x: number; y: number } | null => {
    const w = H[2][0] * x + H[2][1] * y + H[2][2];
    if (!(Math.abs(w) > 1e-12)) return null;
    return { x: (H[0][0] * x + H[0][1] * y + H[0][2]) / w, y: (H[1][0] * x + H[1][1] * y + H[1][2]) / w };
  };
  const c = toPlane(centre.x, centre.y);
  if (!c) return null;
  // The nearest of the tank edge and the crop's border, both carried into the plane, less a pixel.
  const around: { x: number; y: number }[] = [];
  for (let k = 0; k < 180; k++) {
    const a = (2 * Math.PI * k) / 180;
    around.push({ x: tank.cx + tank.r * Math.cos(a), y: tank.cy + tank.r * Math.sin(a) });
  }
  for (let t = 0; t <= 1; t += 1 / 64) {
    const x = 1 + t * (crop.width - 3);
    const y = 1 + t * (crop.height - 3);
    around.push({ x, y: 1 }, { x, y: crop.height - 2 }, { x: 1, y }, { x: crop.width - 2, y });
  }
  let r = Infinity;
  for (const p of around) {
    const q = toPlane(p.x, p.y);
    r = Math.min(r, q ? Math.hypot(q.x - c.x, q.y - c.y) : 0);
  }
  r -= 1;
  if (!(r >= 8)) return null;
  return { cx: c.x, cy: c.y, r, rate, rectify: { H, Hinv } };
}

/** A key that changes whenever the plan would search differently. */
export function planKey(plan: DetectionPlan): string {
  return JSON.stringify(plan);
}
