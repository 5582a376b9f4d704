import { closeTrackingPool } from "../app/.server/tracking/tracking-pool";

/**
 * Runs a script's `main` that tracks (the scene and measurement scripts): an error is printed with
 * its stack and sets exit status 1, and the tracking threads are stopped either way so the process ends.
 */
export function runTrackingScript(main: () => Promise<void>): void {
  main()
    .catch((error: unknown) => {
      process.stderr.write(`${error instanceof Error ? (error.stack ?? error.message) : String(error)}\n`);
      process.exitCode = 1;
    })
    .finally(() => closeTrackingPool());
}
