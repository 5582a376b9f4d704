/**
 * The tracking threads' Node options. A process run through tsx (`npm run worker`, the
 * benchmarks) starts with tsx's loader in its options, and a worker thread inherits them: each
 * thread then loaded tsx again (about 0.2 s of processor time) for a bundle that is plain
 * JavaScript (worker-bundle.ts). The loader is left out only when tsx's are the process's only
 * options: a thread refuses V8 and process-wide options given explicitly (they reach it when
 * inherited), so any other set is inherited as before (undefined).
 */
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
    } else {
      kept.push(arg);
    }
  }
  return dropped && kept.length === 0 ? [] : undefined;
}
