import fs from "node:fs";
import path from "node:path";
import { expect, test } from "@playwright/test";
import { apiAs, people, signIn, logRunThroughForm } from "./helpers";
import { renderStackToDir } from "../fixtures/render-stack";
import { runLabel } from "../../app/lib/runs";

test("stills dropped on a run that carries over the camera's last view setup are tracked as they land, and the verdict comes without pressing a button", async ({
  page,
  baseURL,
}) => {
  test.setTimeout(300_000);
  const stack = await renderStackToDir({ frames: 90, rpm: 15 });
  const tech = await apiAs(baseURL!, people.tech);
  // An earlier run of the same camera, its view set up on frames of this size.
  const earlier = await logRunThroughForm(tech, { setRateRpm: "15", purpose: "The camera's earlier run" });
  for (const file of stack.files.slice(0, 3)) {
    const up = await tech.post(`/api/v1/runs/${earlier}/frames`, {
      multipart: { file: { name: path.basename(file), mimeType: "image/png", buffer: fs.readFileSync(file) } },
    });
    expect(up.status()).toBe(201);
  }
  const r = String(Math.min(stack.width, stack.height) / 2 - 12);
  const setup = await tech.post(`/runs/${earlier}/setup`, {
    form: { centreX: String(stack.centre.x), centreY: String(stack.centre.y), edgeX: String(stack.centre.x), edgeY: String(stack.centre.y), edgeR: r },
    maxRedirects: 0,
  });
  expect(setup.status()).toBe(302);
  const runId = await logRunThroughForm(tech, { setRateRpm: "15", purpose: "Frames tracked as they land" });
  await tech.dispose();

  await signIn(page, people.tech);
  await page.goto(`/runs/${runId}`);
  // Offered, and on, because this camera has a setup from an earlier run.
  const carry = page.getByRole("checkbox", { name: `Carry over the view setup of ${runLabel(earlier)}`, exact: false });
  await expect(carry).toBeChecked();
  await expect(page.getByTestId("stream-notice")).toContainText("Stills dropped here are tracked as they land, with the carried-over view setup");

  // Dropped in reverse order; the stack is ordered by name (frame_2 before frame_10), and the stream declares those places.
  await page.getByLabel("Choose frames, a ZIP or a video").setInputFiles([...stack.files].reverse());
  await expect(page.getByTestId("stream-notice")).toContainText("Tracked as they land");
  await expect(page.getByTestId("setup-carried")).toHaveText(`The view setup of ${runLabel(earlier)} was carried over to this run.`);

  // No button is pressed: the last frame starts tracking, and the check follows it.
  await expect(page.getByTestId("verdict")).toHaveText("Agrees with theory", { timeout: 180_000 });
  await expect(page.getByRole("heading", { name: "Frame stack (90)" })).toBeVisible();
  await expect(page.getByTestId("filmstrip").getByRole("img").nth(1)).toHaveAttribute("alt", "Frame 2: frame_2.png");
  await expect(page.getByTestId("tracking-panel")).toContainText("Done");
  await expect(page.getByRole("button", { name: "Track again" })).toBeVisible();
  await expect(page.getByRole("link", { name: "Change the view setup" })).toBeVisible();
});
