import { checkTracks } from "~/lib/analysis/check-tracks";
import type { TheoryCheckInput } from "~/lib/analysis/check-result";

let warmed = false;

/**
 * Runs the theory check once, on a made-up float circling at the inertial frequency, so that its
 * code (the smoothing, the fits, the words and their number formats) is compiled before a real
 * check needs it (Decision 67). A streamed run's check comes within a second or two of its last
 * frame, and the first check a process makes costs several times a later one. Once per process,
 * after the current request has been answered; nothing it finds is kept.
 */
export function warmTheoryCheck() {
  if (warmed) return;
  warmed = true;
  setImmediate(() => {
    try {
      const omega = (10 * 2 * Math.PI) / 60;
      const points: TheoryCheckInput["points"] = Array.from({ length: 90 }, (_, i) => {
        const t = i / 10;
        // An inertial circle in the rotating frame: turning at f = 2Ω the other way round, 0.02 m across at 1000 px per m.
        return { t, x: 640 + 10 * Math.cos(-2 * omega * t) + 2, y: 360 - 10 * Math.sin(-2 * omega * t) };
      });
      const input: TheoryCheckInput = {
        points,
        setup: { centre: { x: 640, y: 360 }, pxPerM: 1000, mirrored: false },
        omegaSet: omega,
        cameraMode: "rotating",
        settings: { tolerance: 0.03 },
      };
      checkTracks(
        [
          { number: 1, input },
          { number: 2, input: { ...input, cameraMode: "lab" } },
        ],
        "float",
      );
    } catch (err) {
      console.warn(`[check] warming the theory check failed (${err instanceof Error ? err.message : String(err)}); the first check will be slower`);
    }
  });
}
