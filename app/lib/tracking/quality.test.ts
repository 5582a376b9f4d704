import { describe, expect, it } from "vitest";
import { seededRandom } from "../random";
import { trackingQuality, trackJitter } from "./quality";
import type { FrameDetections, Track, TrackPoint } from "./types";

/** A tracer on a circle of 60 px at 0.5 turns a second, seen at 30 fps, with Gaussian centroid noise. */
function circleTrack(noisePx: number, frames = 300): TrackPoint[] {
  const random = seededRandom(5);
  const gauss = () => Math.sqrt(-2 * Math.log(Math.max(random(), 1e-12))) * Math.cos(2 * Math.PI * random());
  return Array.from({ length: frames }, (_, i) => {
    const t = i / 30;
    return {
      t,
      x: 160 + 60 * Math.cos(Math.PI * t) + noisePx * gauss(),
      y: 120 + 60 * Math.sin(Math.PI * t) + noisePx * gauss(),
      frameIndex: i,
    };
  });
}

describe("tracking quality", () => {
  it("measures centroid jitter as the 2-D noise put into a smooth track", () => {
    // σ per axis 0.05 px gives a 2-D RMS of 0.05·√2 px.
    const jitter = trackJitter(circleTrack(0.05));
    expect(jitter).not.toBeNull();
    expect(jitter as number).toBeGreaterThan(0.05 * Math.SQRT2 * 0.9);
    expect(jitter as number).toBeLessThan(0.05 * Math.SQRT2 * 1.1);
  });

  it("finds next to no jitter on a noiseless curved track", () => {
    // 6.3 px a frame round a 60 px circle: what a 7-point quadratic cannot follow is the cubic
    // term, ~0.015 px here, well under the 0.1 px the tracker is held to.
    expect(trackJitter(circleTrack(0)) as number).toBeLessThan(0.02);
  });

  it("has no jitter figure for a track too short to fit", () => {
    expect(trackJitter(circleTrack(0.05, 4))).toBeNull();
  });

  it("reports the share of frames detected overall and per track", () => {
    const points = circleTrack(0.05, 100).filter((p) => p.frameIndex % 10 !== 9);
    const track: Track = { id: 1, points };
    const frames: FrameDetections[] = Array.from({ length: 120 }, (_, i) => ({
      frameIndex: i,
      t: i / 30,
      detections: points.some((p) => p.frameIndex === i) ? [{ x: 0, y: 0, area: 30, roundness: 0.9, intensity: 90 }] : [],
    }));
    const quality = trackingQuality(120, frames, [track], 2);
    expect(quality.framesDetectedShare).toBeCloseTo(90 / 120, 10);
    expect(quality.tracks[0]!.spanFrames).toBe(99);
    expect(quality.tracks[0]!.detectedShare).toBeCloseTo(90 / 99, 10);
    expect(quality.longestTrackShare).toBeCloseTo(90 / 120, 10);
    expect(quality.shortTracksDropped).toBe(2);
  });
});
