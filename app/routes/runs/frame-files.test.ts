import { beforeAll, describe, expect, it } from "vitest";
import sharp from "sharp";
import { Frame } from "~/.server/db";
import { smallLab } from "~/.server/test-support";
import { createRun } from "~/.server/runs/service";
import { sessionStorage } from "~/.server/auth/session";
import { receiveFrameFile } from "~/.server/uploads/frames";
import { runKey, store } from "~/.server/storage";
import { loader as frameImageLoader } from "./frame-image";
import { loader as runPageLoader } from "./run";
import { loader as setupLoader } from "./setup";

/**
 * A frame file gone from wherever the suite keeps them (the local folder by default, a bucket
 * under TEST_STORAGE=s3): the frame route answers 404 naming the frame, never a 500, and the run
 * page's and view setup page's data say so, so the pages can.
 */
let lab: Awaited<ReturnType<typeof smallLab>>;
beforeAll(async () => {
  lab = await smallLab();
});

async function signedIn(url: string, userId: number) {
  const session = await sessionStorage.getSession();
  session.set("userId", userId);
  return new Request(`http://localhost${url}`, { headers: { Cookie: (await sessionStorage.commitSession(session)).split(";")[0]! } });
}
const png = (shade: number) =>
  sharp({ create: { width: 40, height: 30, channels: 3, background: { r: shade, g: 30, b: 60 } } })
    .png()
    .toBuffer();

describe("frame files missing from storage", () => {
  it("give a 404 that names the frame or its thumbnail, and the run page counts them", async () => {
    const run = await createRun(lab.runInput(), lab.tech);
    for (const i of [1, 2, 3]) await receiveFrameFile(run, new File([new Uint8Array(await png(i))], `frame_${i}.png`), null);
    const [first, second] = await Frame.findAll({ where: { runId: run.id }, order: [["position", "ASC"]] });
    if (!first || !second) throw new Error("three frames were stored just above");
    await store().delete(runKey(run.id, first.storedName));
    await store().delete(runKey(run.id, second.thumbName!));

    const call = async (frame: Frame, query = "") => {
      try {
        return await frameImageLoader({
          request: await signedIn(`/runs/${run.id}/frames/${frame.id}/image${query}`, lab.tech.id),
          params: { id: String(run.id), frameId: String(frame.id) },
          context: {},
        } as never);
      } catch (thrown) {
        if (thrown instanceof Response) return thrown;
        throw thrown;
      }
    };
    const gone = await call(first);
    expect(gone.status).toBe(404);
    expect(await gone.json()).toEqual({
      error: { code: "file_missing", message: "The file of frame 1 (frame_1.png) is missing from storage. Bring the same frame again to put it back." },
    });
    const goneThumb = await call(second, "?size=thumb");
    expect(goneThumb.status).toBe(404);
    expect(((await goneThumb.json()) as { error: { message: string } }).error.message).toBe(
      "The file of the thumbnail of frame 2 (frame_2.png) is missing from storage. Bring the same frame again to put it back.",
    );
    expect((await call(second)).status).toBe(200);

    const data = await runPageLoader({ request: await signedIn(`/runs/${run.id}`, lab.tech.id), params: { id: String(run.id) }, context: {} } as never);
    expect(data.frameFiles).toEqual({ missing: 2, unavailable: false });
    expect(data.frames.map((f) => f.missing)).toEqual([true, true, false]);

    // The view setup is marked on the first frame, whose file is gone: the page says so.
    const setup = await setupLoader({ request: await signedIn(`/runs/${run.id}/setup`, lab.tech.id), params: { id: String(run.id) }, context: {} } as never);
    expect(setup.imageMissing).toBe(true);

    // The same frames again put the files back; nothing is added twice.
    for (const i of [1, 2]) {
      const again = await receiveFrameFile(run, new File([new Uint8Array(await png(i))], `frame_${i}.png`), null);
      expect(again.accepted[0]).toMatchObject({ duplicate: true, restored: true });
    }
    const after = await runPageLoader({ request: await signedIn(`/runs/${run.id}`, lab.tech.id), params: { id: String(run.id) }, context: {} } as never);
    expect(after.frameFiles.missing).toBe(0);
    expect(after.frames).toHaveLength(3);
    expect((await call(first)).status).toBe(200);
    const setupAfter = await setupLoader({
      request: await signedIn(`/runs/${run.id}/setup`, lab.tech.id),
      params: { id: String(run.id) },
      context: {},
    } as never);
    expect(setupAfter.imageMissing).toBe(false);
  });
});
