/**
 * The main thread's garbage collections while a pass runs, by kind, from Node's `gc` performance
 * entries: full mark-compacts, young-generation scavenges, and their pauses on this thread (marking
 * done concurrently on V8's platform threads is not in the pause; thread-times.ts has it).
 */
import { constants, PerformanceObserver, type PerformanceEntry } from "node:perf_hooks";

export interface Collections {
  markCompacts: number;
  scavenges: number;
  /** Pauses of the main thread for both kinds and for incremental marking's finishing steps, ms. */
  pauseMs: number;
}

/** Counts from now until `take`, which starts the next count. */
export function collectionCounter(): { take(): Collections; stop(): void } {
  let counts: Collections = { markCompacts: 0, scavenges: 0, pauseMs: 0 };
  const add = (entries: readonly PerformanceEntry[]) => {
    for (const entry of entries) {
      const kind = (entry as unknown as { detail?: { kind?: number } | null }).detail?.kind;
      if (kind === constants.NODE_PERFORMANCE_GC_MAJOR) counts.markCompacts++;
      else if (kind === constants.NODE_PERFORMANCE_GC_MINOR) counts.scavenges++;
      counts.pauseMs += entry.duration;
    }
  };
  const observer = new PerformanceObserver((list) => add(list.getEntries()));
  observer.observe({ entryTypes: ["gc"] });
  return {
    take() {
      // Entries are delivered asynchronously; those already queued are taken now.
      add(observer.takeRecords());
      const taken = { ...counts, pauseMs: Math.round(counts.pauseMs) };
      counts = { markCompacts: 0, scavenges: 0, pauseMs: 0 };
      return taken;
    },
    stop() {
      observer.disconnect();
    },
  };
}
