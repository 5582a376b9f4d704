import type { Mat3 } from "../projective/matrix";
/**
 * Shapes shared by the tracking steps. Positions are full-frame image pixels: x is the column,
 * y the row (pointing down), and the centre of pixel (col, row) sits at (col, row) exactly.
 */

export interface PixelPoint {
  x: number;
  y: number;
}

/** One place in one frame where the tracer was found. */
export interface Detection {
  /** Sub-pixel centroid, full-frame image px. */
  x: number;
  y: number;
  /** Blob area, full-frame px². */
  area: number;
  /** 4πA/P² of the blob outline: 1 for a disc, lower for elongated or ragged blobs. */
  roundness: number;
  /**
   * Peak contrast of the blob, 0–255: difference from the background for a float, saturation for
   * dye found by colour alone, the difference along the dye's colour for dye against a background.
   */
  intensity: number;
  /** A float's disc fitted where glare hid part of it (track-extension.ts): the centre's uncertainty, 1 σ px (not stored). */
  sdPx?: number;
  /** Second moments of a dye patch measured against a background, px² (not stored). */
  spread?: { xx: number; xy: number; yy: number };
}

export interface FrameDetections {
  frameIndex: number;
  /** s */
  t: number;
  detections: Detection[];
}

export interface TrackPoint {
  /** s */
  t: number;
  /** px */
  x: number;
  y: number;
  frameIndex: number;
}

export interface Track {
  id: number;
  points: TrackPoint[];
}

export interface DyeColour {
  /** Hue bounds on OpenCV's 8-bit scale 0–180; hueMin > hueMax wraps through red. */
  hueMin: number;
  hueMax: number;
  /** Saturation and value floors, 0–255. */
  satMin: number;
  valMin: number;
}

export interface TankEdge {
  cx: number;
  cy: number;
  r: number;
}

/** The part of a run's view setup that tracking needs. */
export interface TrackingSetup {
  tracer: "float" | "dye";
  /** Rotation centre, px. Tracking does not use it; it travels with the tracks to the theory check. */
  centre: PixelPoint;
  /** The region searched; null searches the whole frame. */
  tankEdge: TankEdge | null;
  mirrored: boolean;
  dyeColour?: DyeColour;
  /** Blob area bounds in full-frame px². */
  minAreaPx?: number;
  maxAreaPx?: number;
  /** Lowest 4πA/P² a blob may have. */
  minRoundness?: number;
  /**
   * The table's set rate (Ω, rad/s, counter-clockwise seen from above) and the camera mode: what
   * turns in the view and how fast, for the background's turning model (turning-background.ts).
   * Absent or null: everything behind the tracer is taken to stand still in the view.
   */
  rotation?: { omega: number; cameraMode: "rotating" | "lab" } | null;
  /**
   * The view correction of a camera not quite overhead (image px → overhead px, app/lib/projective),
   * when the setup carries tilt marks: the background's turning model turns rigidly in that plane.
   */
  correction?: Mat3 | null;
  /**
   * How a dye's centre reads the frames: in their 8-bit values (`encoded`, the default) or in
   * linear light, glare and dye unmixed (`linear`, dye-unmix.ts; measured on the ray-traced scenes,
   * Decision 102, and not the default).
   */
  dyeLight?: DyeLight;
}

/** The light a dye's difference from the background is read in (dye-patch-signal.ts). */
export type DyeLight = "encoded" | "linear";

export interface TrackQuality {
  id: number;
  points: number;
  /** Frames from the track's first to its last point. */
  spanFrames: number;
  /** points / spanFrames. */
  detectedShare: number;
  /** RMS distance of the points from a local quadratic fit, corrected for the fit's own leverage, px. */
  jitterPx: number | null;
}

export interface TrackingQuality {
  frames: number;
  /** Share of all frames with at least one detection. */
  framesDetectedShare: number;
  /** Share of all frames covered by a point of the longest track. */
  longestTrackShare: number;
  /** Point-weighted RMS jitter over all tracks, px. */
  jitterPx: number | null;
  /** Tracks that ended up shorter than the minimum and were left out. */
  shortTracksDropped: number;
  tracks: TrackQuality[];
}
