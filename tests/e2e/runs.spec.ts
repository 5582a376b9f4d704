import fs from "node:fs";
import path from "node:path";
import { expect, test } from "@playwright/test";
import { apiAs, declineCarryOver, people, signIn, logRunThroughForm } from "./helpers";
import { renderStackToDir } from "../fixtures/render-stack";

test("a technician logs a run, brings a frame stack, sets the view, tracks it and reads the verdict", async ({ page }) => {
  test.setTimeout(180_000);
  const stack = await renderStackToDir({ frames: 90, rpm: 15 });
  await signIn(page, people.tech);
  await page.goto("/runs/new");

  // Live conditions while typing, from the same library the server uses.
  await page.getByLabel("Set rate").fill("15");
  await page.getByLabel("Water depth (at rest)").fill("10");
  await page.getByLabel("Water temperature").fill("20");
  const conditions = page.getByTestId("run-conditions");
  await expect(conditions).toContainText("1.571");
  await expect(conditions).toContainText("3.142");

  // A rate above the table's maximum is refused with the reason, and what was typed stays.
  await page.getByLabel("Set rate").fill("45");
  await page.getByLabel("Purpose").fill("Browser test of the main job");
  await page.getByRole("button", { name: "Log the run" }).click();
  await expect(page.getByText(/rated to 30 rpm; 45 rpm is above its maximum/)).toBeVisible();
  await expect(page.getByLabel("Purpose")).toHaveValue("Browser test of the main job");
  await expect(page.getByText(/Do not run it there/)).toBeVisible();

  await page.getByLabel("Set rate").fill("15");
  await page.getByLabel("Frame rate").fill("30");
  await page.getByRole("button", { name: "Log the run" }).click();
  await expect(page).toHaveURL(/\/runs\/\d+$/);
  const runId = Number(page.url().split("/").pop());

  // This run's view is set up on its own frames below: the camera's last setup, when offered, is not carried over.
  await declineCarryOver(page);

  // Frames through the drop zone (Uppy, one file per request); a text file named .png is refused on its own.
  const fake = path.join(stack.dir, "frame_0.png");
  fs.writeFileSync(fake, "not really a picture");
  await page.getByLabel("Choose frames, a ZIP or a video").setInputFiles([...stack.files, fake]);
  await expect(page.getByTestId("upload-outcomes")).toContainText("frame_0.png: This is not an image Tankside can read", { timeout: 60_000 });
  await expect(page.getByRole("heading", { name: "Frame stack (90)" })).toBeVisible({ timeout: 60_000 });
  await expect(page.getByTestId("filmstrip").getByRole("img")).toHaveCount(90);
  await expect(page.getByTestId("stream-notice")).toContainText("Not tracked as they land");
  await expect(page.getByTestId("stream-notice")).toContainText("the run has no view setup yet");

  // View setup: the centre and the tank edge typed in pixels (the overlay takes clicks too).
  await page.getByRole("link", { name: "Set up the view" }).click();
  await page.getByLabel("Column").nth(0).fill(String(stack.centre.x));
  await page.getByLabel("Row").nth(0).fill(String(stack.centre.y));
  await page.getByLabel("Column").nth(1).fill(String(stack.centre.x));
  await page.getByLabel("Row").nth(1).fill(String(stack.centre.y));
  await page.getByLabel("Radius").fill(String(Math.min(stack.width, stack.height) / 2 - 12));
  await page.getByRole("button", { name: "Save the view setup" }).click();
  await expect(page).toHaveURL(new RegExp(`/runs/${runId}#tracking$`));

  await page.getByRole("button", { name: "Start tracking" }).click();
  await expect(page.getByTestId("tracking-panel")).toContainText("Done", { timeout: 120_000 });
  await expect(page.getByRole("heading", { name: "Tracks (1)" })).toBeVisible();
  await expect(page.getByRole("img", { name: "The middle frame with the tracks drawn over it" })).toBeVisible();
  await expect(page.getByTestId("verdict")).toHaveText("Agrees with theory");
  await expect(page.getByTestId("theory-check")).toContainText("to the right");
  await expect(page.getByTestId("theory-plots").locator("figure")).toHaveCount(5);
  // The demo camera's timing check and scale calibration are in force: the check says what it did with each.
  const applied = page.getByTestId("calibrations-applied");
  await expect(applied).toContainText(/timing check #\d+: frame times × 1\.00111/);
  await expect(applied).toContainText(/scale calibration #\d+: applied — the view setup has no scale/);

  // An instructor may read the run but not change it: 403 from the upload and tracking routes.
  const instructor = await apiAs(new URL(page.url()).origin, people.instructor);
  const res = await instructor.post(`/api/v1/runs/${runId}/tracking`);
  expect(res.status()).toBe(403);
  const up = await instructor.post(`/api/v1/runs/${runId}/frames`, {
    multipart: { file: { name: "x.png", mimeType: "image/png", buffer: fs.readFileSync(stack.files[0]!) } },
  });
  expect(up.status()).toBe(403);
  const progress = await instructor.get(`/api/v1/runs/${runId}/tracking`);
  expect(progress.status()).toBe(200);
  expect((await progress.json()).job.state).toBe("done");
  await instructor.dispose();
});

test("the tracking route explains why a run cannot be tracked yet", async ({ baseURL }) => {
  const tech = await apiAs(baseURL!, people.tech);
  const runId = await logRunThroughForm(tech, { setRateRpm: "10", purpose: "No frames yet" });
  const start = await tech.post(`/api/v1/runs/${runId}/tracking`);
  expect(start.status()).toBe(409);
  expect((await start.json()).error).toMatchObject({ code: "no_frames", message: expect.stringContaining("no frames yet") });
  const truncated = Buffer.from([0xff, 0xd8, 0xff, 0xe0, 0x00, 0x10, 0x4a, 0x46]);
  const bad = await tech.post(`/api/v1/runs/${runId}/frames`, { multipart: { file: { name: "frame_1.jpg", mimeType: "image/jpeg", buffer: truncated } } });
  expect([415, 422]).toContain(bad.status());
  expect((await bad.json()).error.message).toMatch(/frame_1\.jpg/);
  await tech.dispose();
});
