/**
 * `TANKSIDE_SCENE_CACHE=… npx tsx scripts/dye-error-split.ts [lab-dye|rotating-dye] [--frames] [--linear-dye]`:
 * the dye track's error on a ray-traced scene (tests/fixtures/scenes), frame by frame and split by
 * direction, and whether it is a bias or scatter. The track is the longest of Tankside's tracking
 * as the scene test runs it (measure-scene.ts); each frame's error vector (found less truth, px) is
 * split along and across the patch's long axis, radially and tangentially about the rotation
 * centre (tangential positive the way the table turns), towards each lamp (their places in
 * room.inc, turned with the room under a co-rotating camera) and towards the second lamp's glare
 * (where the water's surface mirrors that lamp into the camera). With `--frames` one line a frame
 * also gives how far the glare is, where the patch sits against the bottom's spokes (every 15°)
 * and how far the table has turned.
 *
 * The summary: the RMS; the mean vector and the mean of each component (a bias) against their
 * RMS; how much of the mean square a bias fixed in the image, or fixed in the image plus one fixed
 * on the table (turning with it in view), or fixed on the patch's axes explains (least squares);
 * and f from the truth's own track with parts of the error added (the whole error, its mean, its
 * radial part, its part along the patch's axis), through the scene test's theory check, to tell
 * which part moves f.
 */
import type { Track } from "../app/lib/tracking/types";
import { checkSceneTracks, measureSceneTrack, trackingOptionsFrom } from "../tests/fixtures/scenes/measure-scene";
import { ensureSceneStack } from "../tests/fixtures/scenes/render-scene-stack";
import type { SceneVariant, Vec3 } from "../tests/fixtures/scenes/scene-model";
import { gridSpokeStepDeg, lampsCm, sceneCamera, sceneFrames, tablePoint, variantsNamed, waterLevelCm } from "../tests/fixtures/scenes/scene-model";
import type { SceneTruth } from "../tests/fixtures/scenes/scene-truth";
import { projectPoint } from "../tests/fixtures/scenes/scene-truth";
import { runTrackingScript } from "./run-tracking-script";

type Xy = { x: number; y: number };

export interface FrameError {
  frame: number;
  ex: number;
  ey: number;
  along: number;
  across: number;
  radial: number;
  tangential: number;
  towardMainLamp: number;
  towardSecondLamp: number;
  towardGlare: number;
  glareDistancePx: number;
  /** the patch's centre's angle on the table from the nearest spoke, degrees (−7.5…7.5) */
  spokePhaseDeg: number;
  tableDeg: number;
  /** the long axis in the image and the unit vectors used, for the fits */
  axis: Xy;
  radialUnit: Xy;
}

const unit = (v: Xy): Xy => {
  const n = Math.hypot(v.x, v.y);
  return { x: v.x / n, y: v.y / n };
};
const dot = (a: Xy, b: Xy): number => a.x * b.x + a.y * b.y;
const turn = (p: { x: number; y: number }, deg: number) => {
  const a = (deg * Math.PI) / 180;
  return { x: Math.cos(a) * p.x - Math.sin(a) * p.y, y: Math.sin(a) * p.x + Math.cos(a) * p.y };
};

/** Where the flat water mirrors a lamp (table cm) into the camera, in px. */
function glareAt(variant: SceneVariant, lamp: { x: number; y: number; z: number }): Xy {
  const camera = sceneCamera(variant.tiltDeg);
  const c = camera.location;
  const mirrored: Vec3 = tablePoint(lamp.x, lamp.y, 2 * waterLevelCm - lamp.z);
  const t = (c[1] - waterLevelCm) / (c[1] - mirrored[1]);
  return projectPoint(camera, [c[0] + t * (mirrored[0] - c[0]), waterLevelCm, c[2] + t * (mirrored[2] - c[2])]);
}

/** Each frame of the track against the truth, split as the header says. */
export function frameErrors(variant: SceneVariant, truth: SceneTruth, track: Track): FrameError[] {
  const states = sceneFrames(variant);
  const image = (plan: Xy): Xy => ({ x: plan.x, y: -plan.y });
  return track.points.flatMap((p) => {
    const at = truth.frames[p.frameIndex];
    const state = states[p.frameIndex];
    if (!at || !state) return [];
    const e = { x: p.x - at.x, y: p.y - at.y };
    const axis = image(turn({ x: 1, y: 0 }, state.dyeDeg));
    const radialUnit = unit({ x: at.x - truth.centre.x, y: at.y - truth.centre.y });
    // Counter-clockwise on the table is, with the image's y down, the radial unit turned this way.
    const tangentialUnit = { x: radialUnit.y, y: -radialUnit.x };
    const toward = (lamp: { x: number; y: number }) => unit(image({ x: lamp.x - state.tracer.x, y: lamp.y - state.tracer.y }));
    const lampAt = (lamp: { x: number; y: number; z: number }) => ({ ...turn(lamp, state.roomDeg), z: lamp.z });
    const glare = glareAt(variant, lampAt(lampsCm.second));
    const onTable = turn(state.tracer, -state.tableDeg);
    const angle = (Math.atan2(onTable.y, onTable.x) * 180) / Math.PI;
    const phase = ((((angle + gridSpokeStepDeg / 2) % gridSpokeStepDeg) + gridSpokeStepDeg) % gridSpokeStepDeg) - gridSpokeStepDeg / 2;
    return [
      {
        frame: p.frameIndex,
        ex: e.x,
        ey: e.y,
        along: dot(e, axis),
        across: dot(e, { x: -axis.y, y: axis.x }),
        radial: dot(e, radialUnit),
        tangential: dot(e, tangentialUnit),
        towardMainLamp: dot(e, toward(lampAt(lampsCm.main))),
        towardSecondLamp: dot(e, toward(lampAt(lampsCm.second))),
        towardGlare: dot(e, unit({ x: glare.x - at.x, y: glare.y - at.y })),
        glareDistancePx: Math.hypot(glare.x - at.x, glare.y - at.y),
        spokePhaseDeg: phase,
        tableDeg: state.tableDeg,
        axis,
        radialUnit,
      },
    ];
  });
}

/** Least squares: the share of Σ|e|² that e ≈ Σ βₖ·basisₖ(frame) explains, each basis a vector per frame. */
function explained(rows: readonly FrameError[], bases: readonly ((r: FrameError) => Xy)[]): number {
  const k = bases.length;
  const a = Array.from({ length: k }, () => new Float64Array(k));
  const b = new Float64Array(k);
  let total = 0;
  for (const r of rows) {
    const v = bases.map((f) => f(r));
    for (let i = 0; i < k; i++) {
      b[i] = b[i]! + v[i]!.x * r.ex + v[i]!.y * r.ey;
      for (let j = 0; j < k; j++) a[i]![j] = a[i]![j]! + dot(v[i]!, v[j]!);
    }
    total += r.ex ** 2 + r.ey ** 2;
  }
  // Gaussian elimination (k ≤ 4).
  const m = a.map((row, i) => [...row, b[i]!]);
  for (let i = 0; i < k; i++) {
    const pivot = m[i]![i]!;
    for (let j = i + 1; j < k; j++) {
      const factor = m[j]![i]! / pivot;
      for (let c = i; c <= k; c++) m[j]![c] = m[j]![c]! - factor * m[i]![c]!;
    }
  }
  const beta = new Float64Array(k);
  for (let i = k - 1; i >= 0; i--) {
    let s = m[i]![k]!;
    for (let j = i + 1; j < k; j++) s -= m[i]![j]! * beta[j]!;
    beta[i] = s / m[i]![i]!;
  }
  let residual = 0;
  for (const r of rows) {
    let fx = r.ex;
    let fy = r.ey;
    bases.forEach((f, i) => {
      const v = f(r);
      fx -= beta[i]! * v.x;
      fy -= beta[i]! * v.y;
    });
    residual += fx ** 2 + fy ** 2;
  }
  return 1 - residual / total;
}

const r3 = (v: number) => Number(v.toFixed(3));
const mean = (rows: readonly FrameError[], pick: (r: FrameError) => number) => rows.reduce((s, r) => s + pick(r), 0) / rows.length;
const rmsOf = (rows: readonly FrameError[], pick: (r: FrameError) => number) => Math.sqrt(mean(rows, (r) => pick(r) ** 2));

/** f error (%) of the truth's own track with `part` of each frame's error added. */
function fWith(truth: SceneTruth, rows: readonly FrameError[], part: (r: FrameError) => Xy): number | null {
  const points = rows.map((r) => {
    const at = truth.frames[r.frame]!;
    const d = part(r);
    return { t: at.t, x: at.x + d.x, y: at.y + d.y };
  });
  return checkSceneTracks([{ id: 1, points }], truth).fErrorPercent;
}

export function summarise(truth: SceneTruth, rows: readonly FrameError[]) {
  const mx = mean(rows, (r) => r.ex);
  const my = mean(rows, (r) => r.ey);
  const components = ["along", "across", "radial", "tangential", "towardMainLamp", "towardSecondLamp", "towardGlare"] as const;
  const tableTurned = (r: FrameError, v: Xy): Xy => {
    const t = turn({ x: v.x, y: -v.y }, r.tableDeg);
    return { x: t.x, y: -t.y };
  };
  const fError = (part: (r: FrameError) => Xy) => {
    const f = fWith(truth, rows, part);
    return f === null ? null : r3(f);
  };
  return {
    frames: rows.length,
    rmsPx: r3(rmsOf(rows, (r) => Math.hypot(r.ex, r.ey))),
    meanVectorPx: { x: r3(mx), y: r3(my) },
    components: Object.fromEntries(components.map((c) => [c, { mean: r3(mean(rows, (r) => r[c])), rms: r3(rmsOf(rows, (r) => r[c])) }])),
    shareExplained: {
      fixedInImage: r3(explained(rows, [() => ({ x: 1, y: 0 }), () => ({ x: 0, y: 1 })])),
      // Under a co-rotating camera the table does not turn in view: the same as fixedInImage, and not fitted.
      fixedInImageAndOnTable: rows.every((r) => r.tableDeg === 0)
        ? null
        : r3(explained(rows, [() => ({ x: 1, y: 0 }), () => ({ x: 0, y: 1 }), (r) => tableTurned(r, { x: 1, y: 0 }), (r) => tableTurned(r, { x: 0, y: 1 })])),
      fixedOnPatchAxes: r3(explained(rows, [(r) => r.axis, (r) => ({ x: -r.axis.y, y: r.axis.x })])),
      radialConstant: r3(explained(rows, [(r) => r.radialUnit])),
    },
    fErrorPercentWith: {
      truth: fError(() => ({ x: 0, y: 0 })),
      wholeError: fError((r) => ({ x: r.ex, y: r.ey })),
      meanVector: fError(() => ({ x: mx, y: my })),
      radialPart: fError((r) => ({ x: r.radial * r.radialUnit.x, y: r.radial * r.radialUnit.y })),
      alongAxisPart: fError((r) => ({ x: r.along * r.axis.x, y: r.along * r.axis.y })),
      acrossAxisPart: fError((r) => ({ x: -r.across * r.axis.y, y: r.across * r.axis.x })),
    },
  };
}

export function frameLine(r: FrameError): Record<string, number> {
  return Object.fromEntries(
    Object.entries(r)
      .filter(([, v]) => typeof v === "number")
      .map(([k, v]) => [k, r3(v as number)]),
  );
}

async function main(): Promise<void> {
  const names = process.argv.slice(2).filter((a) => !a.startsWith("-"));
  const [variant] = variantsNamed(names.length > 0 ? names : ["lab-dye"]);
  if (!variant || variant.tracer !== "dye") throw new Error("Name one dye scene: lab-dye or rotating-dye.");
  const stack = await ensureSceneStack(variant, (m) => process.stderr.write(`${m}\n`));
  const { measurement, longest } = await measureSceneTrack(stack, trackingOptionsFrom(process.argv));
  if (!longest) throw new Error(`No track: ${measurement.trackingError ?? "none found"}`);
  const rows = frameErrors(variant, stack.truth, longest);
  if (process.argv.includes("--frames")) for (const r of rows) process.stdout.write(`${JSON.stringify(frameLine(r))}\n`);
  process.stdout.write(
    `${JSON.stringify({ scene: variant.name, rmsErrorPx: measurement.rmsErrorPx, fErrorPercent: measurement.fErrorPercent, ...summarise(stack.truth, rows) })}\n`,
  );
}

if (process.argv[1]?.endsWith("dye-error-split.ts")) runTrackingScript(main);
