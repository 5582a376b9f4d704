/**
 * The tracking threads' Node options. A process run through tsx (`npm run worker`, the
 * benchmarks) starts with tsx's loader in its options, and a worker thread inherits them: each
 * thread then loaded tsx again (about 0.2 s of processor time) for a bundle that is plain
 * JavaScript (worker-bundle.ts). The loader is left out when tsx's and V8's heap sizes are the
 * process's only options. A thread refuses V8's options given explicitly, and needs none: they are
 * V8's for every thread of the process (scripts/node-flags.mjs starts every server with one). Any
 * other set is inherited as it is (undefined).
 */
const heapSize = /^--(initial-heap-size|initial-old-space-size|max-old-space-size|max-semi-space-size|min-semi-space-size)=\d+$/;

export function workerExecArgv(execArgv: readonly string[] = process.execArgv): string[] | undefined {
  const kept: string[] = [];
  let dropped = false;
  for (let i = 0; i < execArgv.length; i++) {
    const arg = execArgv[i]!;
    if ((arg === "--require" || arg === "--import" || arg === "--loader") && /(^|[\\/])tsx([\\/]|$)/.test(execArgv[i + 1] ?? "")) {
      i++;
      dropped = true;
    } else if (/^--(require|import|loader)=(.*[\\/])?tsx([\\/]|$)/.test(arg)) {
      dropped = true;
    } else if (!heapSize.test(arg)) {
      kept.push(arg);
    }
  }
  return dropped && kept.length === 0 ? [] : undefined;
}
