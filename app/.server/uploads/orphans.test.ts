import { describe, expect, it } from "vitest";
import fs from "node:fs/promises";
import path from "node:path";
import { Frame } from "../db";
import { env } from "../env";
import { smallLab } from "../test-support";
import { createRun } from "../runs/service";
import { LocalStore } from "../storage";
import { ORPHAN_MIN_AGE_MS, removeOrphanUploads } from "./orphans";

const exists = (file: string) => fs.stat(file).then(() => true, () => false);

async function writeAged(file: string, ageMs: number) {
  await fs.mkdir(path.dirname(file), { recursive: true });
  await fs.writeFile(file, "x");
  const t = new Date(Date.now() - ageMs);
  await fs.utimes(file, t, t);
}

// The folder store, whatever store the suite runs with: this test ages files on disk. The same sweep
// over a bucket is tested in storage/s3-store.test.ts.
const local = new LocalStore(env.uploadsDir);

describe("orphan upload files at start", () => {
  it("removes old unreferenced frames and attachments, keeps referenced ones and uploads in flight", async () => {
    const lab = await smallLab();
    const run = await createRun(lab.runInput(), lab.tech);
    const dir = path.join(env.uploadsDir, "runs", String(run.id));
    const old = 2 * ORPHAN_MIN_AGE_MS;
    const kept = path.join(dir, "11111111-1111-4111-8111-111111111111.png");
    const keptThumb = kept.replace(".png", ".thumb.webp");
    await writeAged(kept, old);
    await writeAged(keptThumb, old);
    await Frame.create({
      runId: run.id, position: 0, originalName: "f0.png", storedName: path.basename(kept), thumbName: path.basename(keptThumb),
      sha256: "0".repeat(64), format: "png", widthPx: 4, heightPx: 4, sizeBytes: 1, timeS: 0,
    });
    const orphan = path.join(dir, "22222222-2222-4222-8222-222222222222.png");
    const inFlight = path.join(dir, "33333333-3333-4333-8333-333333333333.png");
    const orphanAttachment = path.join(env.uploadsDir, "calibrations", "44444444-4444-4444-8444-444444444444.pdf");
    await writeAged(orphan, old);
    await writeAged(inFlight, 1000);
    await writeAged(orphanAttachment, old);
    const leftStaged = path.join(env.uploadsDir, "tmp", "55555555-5555-4555-8555-555555555555.part");
    const staging = path.join(env.uploadsDir, "tmp", "66666666-6666-4666-8666-666666666666.part");
    await writeAged(leftStaged, old);
    await writeAged(staging, 1000);

    expect(await removeOrphanUploads(new Date(), local)).toBe(3);
    expect(await exists(leftStaged)).toBe(false);
    expect(await exists(staging)).toBe(true);
    await fs.rm(staging);
    expect(await exists(kept)).toBe(true);
    expect(await exists(keptThumb)).toBe(true);
    expect(await exists(inFlight)).toBe(true);
    expect(await exists(orphan)).toBe(false);
    expect(await exists(orphanAttachment)).toBe(false);
    // Nothing left to do on a second start.
    expect(await removeOrphanUploads(new Date(), local)).toBe(0);
  });
});
