import fs from "node:fs";
import { expect, test } from "@playwright/test";
import { apiAs, people, signIn, logRunThroughForm } from "./helpers";
import { renderStackToDir } from "../fixtures/render-stack";

test("a technician nudges the view setup's marks with the keys, steps through the frames with the keyboard, removes one, and the check is made again", async ({
  page,
  baseURL,
}) => {
  test.setTimeout(300_000);
  const stack = await renderStackToDir({ frames: 60, rpm: 15 });
  const tech = await apiAs(baseURL!, people.tech);
  const runId = await logRunThroughForm(tech, { setRateRpm: "15", purpose: "Frame review in the browser" });
  for (const file of stack.files) {
    const up = await tech.post(`/api/v1/runs/${runId}/frames`, {
      multipart: { file: { name: file.split("/").pop()!, mimeType: "image/png", buffer: fs.readFileSync(file) } },
    });
    expect(up.status()).toBe(201);
  }
  await tech.dispose();

  // View setup: the centre typed one pixel left and ten up, then put right with the arrow keys; zoom in and out.
  await signIn(page, people.tech);
  await page.goto(`/runs/${runId}/setup`);
  await page
    .getByLabel("Column")
    .nth(0)
    .fill(String(stack.centre.x - 1));
  await page
    .getByLabel("Row")
    .nth(0)
    .fill(String(stack.centre.y - 10));
  await page.getByLabel("Column").nth(1).fill(String(stack.centre.x));
  await page.getByLabel("Row").nth(1).fill(String(stack.centre.y));
  await page.getByLabel("Radius").fill(String(Math.min(stack.width, stack.height) / 2 - 12));
  await page.getByRole("radio", { name: /Rotation centre/ }).check();
  await page.getByRole("button", { name: "Zoom in" }).click();
  await page.getByRole("button", { name: "Zoom in" }).click();
  await expect(page.getByTestId("setup-zoom")).toHaveText("4×");
  const viewport = page.getByTestId("setup-viewport");
  // Zoomed, the frame is four times the box's width and scrolls inside it.
  expect(await viewport.evaluate((el) => el.scrollWidth / el.clientWidth)).toBeGreaterThan(3.5);
  // The chosen mark is brought into the middle of the zoomed view, not left off-screen.
  const markBox = (await page.getByTestId("selected-mark").boundingBox())!;
  const viewBox = (await viewport.boundingBox())!;
  const middle = { x: markBox.x + markBox.width / 2 - viewBox.x, y: markBox.y + markBox.height / 2 - viewBox.y };
  expect(Math.abs(middle.x - viewBox.width / 2)).toBeLessThan(viewBox.width / 4);
  expect(Math.abs(middle.y - viewBox.height / 2)).toBeLessThan(viewBox.height / 4);
  await viewport.focus();
  await page.keyboard.press("ArrowRight");
  await page.keyboard.press("Shift+ArrowDown");
  await expect(page.getByLabel("Column").nth(0)).toHaveValue(String(stack.centre.x));
  await expect(page.getByLabel("Row").nth(0)).toHaveValue(String(stack.centre.y));
  await page.keyboard.press("-");
  await expect(page.getByTestId("setup-zoom")).toHaveText("2×");
  await page.getByRole("button", { name: "Save the view setup" }).click();
  await expect(page).toHaveURL(new RegExp(`/runs/${runId}#tracking$`));

  await page.getByRole("button", { name: "Start tracking" }).click();
  await expect(page.getByTestId("tracking-panel")).toContainText("Done", { timeout: 120_000 });
  await expect(async () => {
    await page.reload();
    await expect(page.getByTestId("verdict")).toBeVisible({ timeout: 2_000 });
  }).toPass({ timeout: 60_000 });
  const pointsOf = async () => Number(/\((\d+) points\)/.exec((await page.getByTestId("theory-check").textContent()) ?? "")?.[1]);
  const before = await pointsOf();
  expect(before).toBeGreaterThan(40);
  expect(before).toBeLessThanOrEqual(60);

  // Step through the frames with the keyboard while the viewer has focus.
  const viewer = page.getByTestId("frame-viewer");
  const position = page.getByTestId("frame-position");
  await expect(position).toContainText("Frame 1 of 60");
  await viewer.focus();
  await page.keyboard.press("ArrowRight");
  await page.keyboard.press("ArrowRight");
  await expect(position).toContainText("Frame 3 of 60");
  await expect(position).toContainText("tracer found (track 1)");
  await expect(page.getByTestId("frame-overlay").getByTestId("overlay-point")).toHaveCount(1);
  await expect(page.getByTestId("overlay-rim")).toHaveCount(1);
  await page.keyboard.press("End");
  await expect(position).toContainText("Frame 60 of 60");
  await page.keyboard.press("Home");
  await expect(position).toContainText("Frame 1 of 60");
  await page.keyboard.press("ArrowRight");
  await page.keyboard.press("ArrowRight");
  await expect(position).toContainText("Frame 3 of 60 · 0.067 s · frame_3.png");
  // The range input scrubs too.
  await page.getByRole("slider", { name: "Frame" }).fill("3");
  await expect(position).toContainText("Frame 3 of 60");

  // Remove frame 3, confirming first.
  await page.getByRole("button", { name: "Remove frame 3…" }).click();
  await expect(page.getByTestId("removal-confirmation")).toContainText("Remove frame 3 (frame_3.png)?");
  await page.getByRole("button", { name: "Yes, remove frame 3" }).click();
  await expect(page.getByTestId("removal-outcome")).toContainText("Removed 1 frame; 59 left. The run is being tracked again");
  await expect(page.getByRole("heading", { name: "Frame stack (59)" })).toBeVisible();
  // Frame 4 keeps its time: the removed frame leaves a gap of one frame interval.
  await expect(position).toContainText("Frame 3 of 59 · 0.100 s · frame_4.png");

  // The check is made again from the 59 frames left: its point count changes and a verdict is shown again.
  await expect(async () => {
    await page.reload();
    await expect(page.getByTestId("theory-check")).toBeVisible({ timeout: 2_000 });
    const after = await pointsOf();
    expect(after).not.toBe(before);
    expect(after).toBeLessThanOrEqual(59);
  }).toPass({ timeout: 150_000 });
  await expect(page.getByTestId("verdict")).toBeVisible();
  await expect(page.getByText("The theory check is out of date")).toHaveCount(0);
  await expect(page.getByTestId("frame-position")).toContainText("tracer found");
});
