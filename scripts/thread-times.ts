/**
 * Processor time of this process's threads by kind, from /proc/self/task/<tid>/stat (Linux only;
 * 10 ms ticks): the main thread, libvips's decoding threads, Node's other threads present before
 * a pass (V8's platform threads: garbage collection and compilation; libuv's pool: file reads and
 * sharp's calls), and threads started since a given snapshot (the tracking workers).
 */
import { existsSync, readdirSync, readFileSync } from "node:fs";

export type ThreadSnapshot = Map<string, { name: string; ms: number }>;

const tickMs = 10;

export function threadSnapshot(): ThreadSnapshot {
  const out: ThreadSnapshot = new Map();
  if (!existsSync("/proc/self/task")) return out;
  for (const tid of readdirSync("/proc/self/task")) {
    let stat: string;
    try {
      stat = readFileSync(`/proc/self/task/${tid}/stat`, "utf8");
    } catch {
      continue; // ended meanwhile
    }
    const name = stat.slice(stat.indexOf("(") + 1, stat.lastIndexOf(")"));
    const fields = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
    out.set(tid, { name, ms: (Number(fields[11]) + Number(fields[12])) * tickMs });
  }
  return out;
}

export interface ThreadTimes {
  mainMs: number;
  libvipsMs: number;
  /** Node's threads that existed at `existing` (V8's platform threads and libuv's pool). */
  nodeHelpersMs: number;
  /** Threads started after `existing` other than libvips's: the tracking workers. */
  startedMs: number;
}

/** Processor time spent between `before` and `after`, by kind; `existing` tells helpers from new threads. */
export function threadTimes(before: ThreadSnapshot, after: ThreadSnapshot, existing: ThreadSnapshot): ThreadTimes {
  const times: ThreadTimes = { mainMs: 0, libvipsMs: 0, nodeHelpersMs: 0, startedMs: 0 };
  for (const [tid, { name, ms }] of after) {
    const spent = ms - (before.get(tid)?.ms ?? 0);
    if (tid === String(process.pid)) times.mainMs += spent;
    else if (name.startsWith("libvips")) times.libvipsMs += spent;
    else if (existing.has(tid)) times.nodeHelpersMs += spent;
    else times.startedMs += spent;
  }
  return times;
}

/** Processor time of each thread that spent any between `before` and `after`, most first: tid, name, ms. */
export function eachThread(before: ThreadSnapshot, after: ThreadSnapshot): { tid: string; name: string; ms: number }[] {
  const out: { tid: string; name: string; ms: number }[] = [];
  for (const [tid, { name, ms }] of after) {
    const spent = ms - (before.get(tid)?.ms ?? 0);
    if (spent > 0) out.push({ tid, name, ms: spent });
  }
  return out.sort((a, b) => b.ms - a.ms);
}
