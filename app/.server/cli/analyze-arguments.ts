/** The analysis command's arguments: what they mean, and a clear complaint when one is wrong. */
import { parseArgs } from "node:util";

export const usage = `Usage: npm run --silent analyze -- <frames-dir> --rpm <n> --direction ccw|cw --fps <n>
         --camera rotating|lab --centre <col>,<row> --tracer float|dye
         [--px-per-cm <s>] [--tank-edge <cx>,<cy>,<r>] [--mirrored]

  <frames-dir>   folder of frames (jpg, jpeg, png, tif, tiff, webp), taken in natural name order
  --rpm          set rate of the table, revolutions per minute
  --direction    ccw (counterclockwise seen from above) or cw
  --fps          frame rate; frame i is at i / fps seconds
  --camera       rotating (rides on the table) or lab (fixed in the room)
  --centre       rotation centre in image pixels
  --tracer       float or dye
  --px-per-cm    scale, pixels per centimetre (without it lengths stay in pixels)
  --tank-edge    circle searched, image pixels (default: the whole frame)
  --mirrored     the image is mirrored (camera below the table, or a mirror)`;

export class UsageError extends Error {}

export interface AnalyzeArguments {
  framesDir: string;
  rpm: number;
  direction: "ccw" | "cw";
  fps: number;
  camera: "rotating" | "lab";
  centre: { x: number; y: number };
  tracer: "float" | "dye";
  pxPerCm: number | null;
  tankEdge: { cx: number; cy: number; r: number } | null;
  mirrored: boolean;
}

/** `count` numbers, as a tuple of that length. */
type Numbers<N extends number, T extends number[] = []> = T["length"] extends N ? T : Numbers<N, [...T, number]>;

function numberList<N extends number>(name: string, value: string, count: N): Numbers<N> {
  const texts = value.split(",").map((p) => p.trim());
  const parts = texts.map(Number);
  if (parts.length !== count || texts.some((p) => p === "") || parts.some((p) => !Number.isFinite(p))) {
    throw new UsageError(`--${name} needs ${count} numbers separated by commas, not "${value}".`);
  }
  return parts as Numbers<N>; // the length was checked just above
}

function positive(name: string, value: string | undefined, allowZero = false): number {
  if (value === undefined) throw new UsageError(`--${name} is required.`);
  const n = Number(value);
  if (value.trim() === "" || !Number.isFinite(n) || n < 0 || (!allowZero && n === 0)) {
    throw new UsageError(`--${name} must be a number ${allowZero ? "of zero or more" : "above zero"}, not "${value}".`);
  }
  return n;
}

function oneOf<T extends string>(name: string, value: string | undefined, allowed: readonly T[]): T {
  if (value === undefined) throw new UsageError(`--${name} is required.`);
  if (!(allowed as readonly string[]).includes(value)) {
    throw new UsageError(`--${name} must be ${allowed.join(" or ")}, not "${value}".`);
  }
  return value as T;
}

export function parseAnalyzeArguments(argv: string[]): AnalyzeArguments | "help" {
  let parsed;
  try {
    parsed = parseArgs({
      args: argv,
      allowPositionals: true,
      strict: true,
      options: {
        rpm: { type: "string" },
        direction: { type: "string" },
        fps: { type: "string" },
        camera: { type: "string" },
        centre: { type: "string" },
        tracer: { type: "string" },
        "px-per-cm": { type: "string" },
        "tank-edge": { type: "string" },
        mirrored: { type: "boolean" },
        help: { type: "boolean", short: "h" },
      },
    });
  } catch (error) {
    throw new UsageError(error instanceof Error ? error.message : String(error));
  }
  const { values, positionals } = parsed;
  if (values.help) return "help";
  if (positionals.length !== 1) throw new UsageError("Give exactly one folder of frames.");
  if (values.centre === undefined) throw new UsageError("--centre is required.");
  const [x, y] = numberList("centre", values.centre, 2);
  const edge = values["tank-edge"] === undefined ? null : numberList("tank-edge", values["tank-edge"], 3);
  if (edge && !(edge[2] > 0)) throw new UsageError("--tank-edge needs a radius above zero.");
  return {
    framesDir: positionals[0]!,
    rpm: positive("rpm", values.rpm, true),
    direction: oneOf("direction", values.direction, ["ccw", "cw"] as const),
    fps: positive("fps", values.fps),
    camera: oneOf("camera", values.camera, ["rotating", "lab"] as const),
    centre: { x, y },
    tracer: oneOf("tracer", values.tracer, ["float", "dye"] as const),
    pxPerCm: values["px-per-cm"] === undefined ? null : positive("px-per-cm", values["px-per-cm"]),
    tankEdge: edge ? { cx: edge[0], cy: edge[1], r: edge[2] } : null,
    mirrored: values.mirrored ?? false,
  };
}
