import { Track, TrackingJob, type Run } from "../db";
import { parseTrackPoints } from "./theory";
import { trackingFingerprint } from "./provenance";
import type { ReviewTrack } from "~/lib/frame-review";

export interface FrameReviewData {
  /** The tracks to draw over the frames: only tracks made from the present frames and view setup. */
  tracks: ReviewTrack[];
  /** Tracks exist but were made from another stack or setup (frames removed or added since): not drawn, their frame numbers no longer match. */
  tracksOutOfDate: boolean;
}

/**
 * What the frame viewer draws besides the frames and the view setup: each track's points by frame
 * position. A track belongs to the frames its job tracked; once the stack or the setup changed,
 * its frame indices point at other frames, so it is left out until tracking runs again.
 */
export async function frameReviewData(run: Run): Promise<FrameReviewData> {
  const tracks = await Track.findAll({ where: { runId: run.id }, order: [["number", "ASC"]] });
  if (!tracks.length) return { tracks: [], tracksOutOfDate: false };
  const jobIds = [...new Set(tracks.map((t) => t.jobId))];
  const [jobs, present] = await Promise.all([TrackingJob.findAll({ where: { id: jobIds }, attributes: ["id", "inputFingerprint"] }), trackingFingerprint(run)]);
  const currentJobs = new Set(jobs.filter((j) => j.inputFingerprint === present).map((j) => j.id));
  const current = tracks.filter((t) => currentJobs.has(t.jobId));
  if (current.length < tracks.length) return { tracks: [], tracksOutOfDate: true };
  return {
    tracks: current.map((t) => ({
      number: t.number,
      points: parseTrackPoints(t).map((p): ReviewTrack["points"][number] => [p.frameIndex, p.x, p.y]),
    })),
    tracksOutOfDate: false,
  };
}
