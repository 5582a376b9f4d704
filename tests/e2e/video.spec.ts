import fs from "node:fs";
import path from "node:path";
import { expect, test, type Page } from "@playwright/test";
import { apiAs, declineCarryOver, people, signIn, logRunThroughForm } from "./helpers";
import { renderVideo, type VideoKind } from "../fixtures/render-video";
import { renderStackToDir } from "../fixtures/render-stack";

const outDir = path.resolve(import.meta.dirname, "../.tmp", `videos-${process.env.E2E_PORT ?? "3210"}`);

async function logRun(page: Page, purpose: string) {
  await page.goto("/runs/new");
  await page.getByLabel("Set rate").fill("15");
  await page.getByLabel("Water depth (at rest)").fill("10");
  await page.getByLabel("Water temperature").fill("20");
  await page.getByLabel("Frame rate").fill("30");
  await page.getByLabel("Purpose").fill(purpose);
  await page.getByRole("button", { name: "Log the run" }).click();
  await expect(page).toHaveURL(/\/runs\/\d+$/);
  return Number(page.url().split("/").pop());
}

// Both made from the same rendered stack: a float on its inertial circle with the table at the set 15 rpm, 30 frames/s.
for (const kind of ["mp4-h264", "webm-vp8"] as VideoKind[]) {
  test(`a ${kind} video of 90 frames is cut in the browser into 90 frames with the container's own times, and the run agrees with theory`, async ({ page }) => {
    test.setTimeout(300_000);
    const video = await renderVideo({ kind, frames: 90, rpm: 15, outDir });
    // The container's own frame times, from ffprobe: the reference the cut must match.
    expect(video.times).toHaveLength(90);

    await signIn(page, people.tech);
    const runId = await logRun(page, `Browser test of cutting a ${kind} video`);
    // This run's view is set up on its own frames below: the camera's last setup, when offered, is not carried over.
    await declineCarryOver(page);
    await page.getByLabel("Choose frames, a ZIP or a video").setInputFiles(video.file);
    await expect(page.getByTestId("stream-notice")).toContainText("Not tracked as they land");
    await expect(page.getByRole("heading", { name: "Frame stack (90)" })).toBeVisible({ timeout: 180_000 });
    await expect(page.getByTestId("upload-outcomes")).not.toContainText("refused");

    const listed = (await (await page.request.get(`/api/v1/runs/${runId}/frames`)).json()) as {
      frameCount: number;
      frames: { position: number; timeS: number | null }[];
    };
    expect(listed.frameCount).toBe(90);
    const times = listed.frames.map((f) => f.timeS);
    for (let i = 0; i < 90; i++) {
      expect(times[i], `frame ${i}`).not.toBeNull();
      expect(Math.abs((times[i] as number) - video.times[i]!), `frame ${i}: ${times[i]} s against the container's ${video.times[i]} s`).toBeLessThan(1e-3);
    }

    await page.getByRole("link", { name: "Set up the view" }).click();
    await page.getByLabel("Column").nth(0).fill(String(video.centre.x));
    await page.getByLabel("Row").nth(0).fill(String(video.centre.y));
    await page.getByLabel("Column").nth(1).fill(String(video.centre.x));
    await page.getByLabel("Row").nth(1).fill(String(video.centre.y));
    await page.getByLabel("Radius").fill(String(Math.min(video.width, video.height) / 2 - 12));
    await page.getByRole("button", { name: "Save the view setup" }).click();
    await expect(page).toHaveURL(new RegExp(`/runs/${runId}#tracking$`));
    await page.getByRole("button", { name: "Start tracking" }).click();
    await expect(page.getByTestId("tracking-panel")).toContainText("Done", { timeout: 150_000 });
    await expect(page.getByTestId("verdict")).toHaveText("Agrees with theory");
  });
}

test("a frame time that is not a finite number of seconds from 0 up to 1e5 is refused with the reason", async ({ baseURL }) => {
  const stack = await renderStackToDir({ frames: 1, rpm: 15 });
  const png = fs.readFileSync(stack.files[0]!);
  const tech = await apiAs(baseURL!, people.tech);
  const runId = await logRunThroughForm(tech, { setRateRpm: "15", purpose: "Frame times checked" });
  const send = (timeS: string) =>
    tech.post(`/api/v1/runs/${runId}/frames`, { multipart: { file: { name: "frame_1.png", mimeType: "image/png", buffer: png }, timeS } });
  for (const [timeS, message] of [
    ["-0.1", /before the start/],
    ["100000", /beyond 100000 s/],
    ["Infinity", /not a number of seconds/],
    ["NaN", /not a number of seconds/],
    ["1e999", /finite/],
    ["2 s", /not a number of seconds/],
  ] as const) {
    const res = await send(timeS);
    expect(res.status(), `timeS=${timeS}`).toBe(400);
    const body = (await res.json()) as { error: { code: string; message: string } };
    expect(body.error.code).toBe("invalid_time");
    expect(body.error.message).toMatch(message);
  }
  const none = (await (await tech.get(`/api/v1/runs/${runId}/frames`)).json()) as { frameCount: number };
  expect(none.frameCount).toBe(0);
  const good = await send("1.25");
  expect(good.status()).toBe(201);
  const listed = (await (await tech.get(`/api/v1/runs/${runId}/frames`)).json()) as { frames: { timeS: number | null }[] };
  expect(listed.frames.map((f) => f.timeS)).toEqual([1.25]);
  await tech.dispose();
  fs.rmSync(stack.dir, { recursive: true, force: true });
});
