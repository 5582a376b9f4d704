/**
 * sharp alone, without the app: reads and decodes the bench's rendered float stack (run
 * `npm run bench` once to render it) as a job's decoder does (the tank's box, green channel, raw
 * bytes, six frames at a time), in three passes, and prints on stdout each pass's processor time
 * and the main thread's collections (scripts/gc-counts.ts). `--into slot` writes each frame into
 * one of six reused arrays of shared memory (as a tracking pass does), `--into copy` makes a new
 * array a frame (as the bench's decode-only pass does), `--into none` drops sharp's buffer.
 * `--live-mb N` keeps N MB of small objects alive first, as a larger heap would.
 *
 * It tells whether sharp's new buffer a frame is enough on its own to set off full mark-compacts
 * on the main thread (Decision 89: in this loop it was not).
 */
import { readdirSync } from "node:fs";
import { readFile } from "node:fs/promises";
import path from "node:path";
import { fileURLToPath } from "node:url";
import sharp from "sharp";
import { collectionCounter } from "./gc-counts";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const cache = path.join(root, "node_modules/.cache/tankside-bench");
const stack = readdirSync(cache).find((name) => name.startsWith("float-600-1280x720-"));
if (!stack) throw new Error("No rendered float stack: run `npm run bench` once.");
const dir = path.join(cache, stack);
const files = readdirSync(dir)
  .filter((n) => n.endsWith(".jpg"))
  .sort()
  .map((n) => path.join(dir, n));

const arg = (name: string, fallback: string) => {
  const at = process.argv.indexOf(name);
  return at >= 0 ? (process.argv[at + 1] ?? fallback) : fallback;
};
const into = arg("--into", "slot");
if (into !== "slot" && into !== "copy" && into !== "none") throw new Error(`--into is slot, copy or none, not ${into}.`);
const liveMb = Number(arg("--live-mb", "0"));
/** The bench's tank box (its setup's tank edge, r 335 px about 640, 360). */
const crop = { left: 305, top: 25, width: 670, height: 670 };
const inFlight = 6;

const live = Array.from({ length: Math.round((liveMb * 1024 * 1024) / 64) }, (_, i) => ({ i, label: `k${i}` }));
const slots = Array.from({ length: inFlight }, () => new Uint8Array(new SharedArrayBuffer(crop.width * crop.height)));
const counter = collectionCounter();

async function pass(): Promise<void> {
  let next = 0;
  const before = process.cpuUsage();
  await Promise.all(
    slots.map(async (slot) => {
      while (next < files.length) {
        const bytes = await readFile(files[next++]!);
        const data = await sharp(bytes).extract(crop).extractChannel(1).raw().toBuffer();
        if (into === "slot") slot.set(data);
        else if (into === "copy") new Uint8Array(data).fill(0, 0, 1);
      }
    }),
  );
  const cpu = process.cpuUsage(before);
  process.stdout.write(`${JSON.stringify({ into, liveObjects: live.length, cpuMs: Math.round((cpu.user + cpu.system) / 1000), ...counter.take() })}\n`);
}

counter.take();
for (let k = 0; k < 3; k++) await pass();
counter.stop();
