import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";
import { expect, test, type Page } from "@playwright/test";
import { apiAs, logRunThroughForm, people, signIn } from "./helpers";
import { tiltedCamera } from "../fixtures/tilted-camera";

/**
 * A 640 × 360 frame of a tank's bottom seen by an exact pinhole camera tilted 8° towards the
 * frame's top: a 14 cm disc with a 2 cm grid and four dark marks 12 cm from the centre.
 */
const camera = tiltedCamera(8, 90);
const marks = [
  { x: 12, y: 0 },
  { x: 0, y: 12 },
  { x: -12, y: 0 },
  { x: 0, y: -12 },
];

async function tiltedFrame(): Promise<Buffer> {
  const at = (x: number, y: number) => camera.project({ x, y });
  const disc = Array.from({ length: 90 }, (_, i) => at(14 * Math.cos((i * Math.PI) / 45), 14 * Math.sin((i * Math.PI) / 45)));
  const lines: string[] = [];
  for (let c = -12; c <= 12; c += 2) {
    const half = Math.sqrt(14 ** 2 - c ** 2);
    const [a, b, p, q] = [at(c, -half), at(c, half), at(-half, c), at(half, c)];
    lines.push(`<line x1="${a.x}" y1="${a.y}" x2="${b.x}" y2="${b.y}"/>`, `<line x1="${p.x}" y1="${p.y}" x2="${q.x}" y2="${q.y}"/>`);
  }
  const dots = marks.map((m) => at(m.x, m.y)).map((p) => `<circle cx="${p.x}" cy="${p.y}" r="3.5" fill="#a0142a"/>`);
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="640" height="360">
    <rect width="640" height="360" fill="#2b2f33"/>
    <polygon points="${disc.map((p) => `${p.x},${p.y}`).join(" ")}" fill="#d9dcd6" stroke="#5a6068" stroke-width="3"/>
    <g stroke="#8a9096" stroke-width="1">${lines.join("")}</g>${dots.join("")}</svg>`;
  return sharp(Buffer.from(svg)).png().toBuffer();
}

/** A run of the technician's with the tilted frame as its only frame. */
async function runWithTiltedFrame(baseURL: string, purpose: string): Promise<number> {
  const api = await apiAs(baseURL, people.tech);
  const runId = await logRunThroughForm(api, { setRateRpm: "10", purpose });
  const res = await api.post(`/api/v1/runs/${runId}/frames`, {
    multipart: { file: { name: "tilted.png", mimeType: "image/png", buffer: await tiltedFrame() } },
  });
  expect(res.status()).toBe(201);
  await api.dispose();
  return runId;
}

/**
 * Clicks the frame at image pixel p, zoomed in 8× (a screen pixel is a tenth of an image pixel)
 * with p scrolled to the middle: at 1× a click lands up to half an image pixel off, which moves
 * the lean read from four points by degrees.
 */
async function clickFrame(page: Page, p: { x: number; y: number }) {
  const viewport = page.getByTestId("setup-viewport");
  await viewport.scrollIntoViewIfNeeded();
  await viewport.evaluate((box, at) => {
    box.scrollLeft = (at.x / 640) * box.scrollWidth - box.clientWidth / 2;
    box.scrollTop = (at.y / 360) * box.scrollHeight - box.clientHeight / 2;
  }, p);
  const box = (await page.getByTestId("setup-overlay").boundingBox())!;
  await page.mouse.click(box.x + (p.x / 640) * box.width, box.y + (p.y / 360) * box.height);
}

const centre = camera.project({ x: 0, y: 0 });

async function setCentre(page: Page) {
  await page.getByLabel("Column").nth(0).fill(centre.x.toFixed(2));
  await page.getByLabel("Row").nth(0).fill(centre.y.toFixed(2));
}

test("a technician places four known points on a tilted frame, reads the lean and the table's grid, and saves them", async ({ page, baseURL }) => {
  test.setTimeout(120_000);
  const runId = await runWithTiltedFrame(baseURL!, "Known points on a tilted camera");
  await signIn(page, people.tech);
  await page.goto(`/runs/${runId}/setup`);
  await setCentre(page);
  await page.getByRole("button", { name: "Tilt (4+ known points)" }).click();
  await page.getByTestId("setup-viewport").scrollIntoViewIfNeeded();
  for (let i = 0; i < 3; i++) await page.getByRole("button", { name: "Zoom in" }).click();
  await expect(page.getByTestId("setup-zoom")).toHaveText("8×");
  for (const [i, m] of marks.entries()) {
    await clickFrame(page, camera.project(m));
    await page.getByLabel(`Point ${i + 1} x`).fill(String(m.x));
    await page.getByLabel(`Point ${i + 1} y`).fill(String(m.y));
  }
  for (let i = 0; i < 3; i++) await page.getByRole("button", { name: "Zoom out" }).click();
  const readout = page.getByTestId("tilt-readout");
  await expect(readout).toContainText("towards the top of the frame");
  // Clicks land within a twentieth of an image pixel of the marks: the lean reads 8° to within half a degree.
  const lean = Number(/Camera tilted ([\d.]+)°/.exec((await readout.textContent()) ?? "")?.[1]);
  expect(Math.abs(lean - 8)).toBeLessThan(0.5);
  const grid = page.getByTestId("known-grid");
  await expect(grid.locator("line")).toHaveCount(10);
  await expect(page.getByTestId("known-fitted")).toHaveCount(4);

  if (process.env.SETUP_SHOTS) {
    fs.mkdirSync(process.env.SETUP_SHOTS, { recursive: true });
    await page.screenshot({ path: path.join(process.env.SETUP_SHOTS, "known-desktop.png"), fullPage: true });
    await page.setViewportSize({ width: 390, height: 844 });
    await page.screenshot({ path: path.join(process.env.SETUP_SHOTS, "known-phone.png"), fullPage: true });
    await page.setViewportSize({ width: 1280, height: 720 });
  }

  await page.getByRole("button", { name: "Save the view setup" }).click();
  await expect(page).toHaveURL(new RegExp(`/runs/${runId}#tracking$`));

  // Opened again, the editor draws the saved points' grid and reads the same lean.
  await page.goto(`/runs/${runId}/setup`);
  await expect(page.getByTestId("tilt-readout")).toContainText(`Camera tilted ${lean.toFixed(1)}° towards the top of the frame`);
  await expect(page.getByTestId("known-grid").locator("line")).toHaveCount(10);
  await expect(page.getByLabel("Point 3 x")).toHaveValue("-12");
  const api = await apiAs(baseURL!, people.tech);
  const saved = (await (await api.get(`/api/v1/runs/${runId}`)).json()) as { viewSetup: { tiltCorrection: { method: string; tiltDeg: number } } };
  expect(saved.viewSetup.tiltCorrection.method).toBe("known points");
  expect(saved.viewSetup.tiltCorrection.tiltDeg).toBeCloseTo(lean, 1);
  await api.dispose();
});

test("known points the correction cannot use are refused in words, and the saved ones stay", async ({ page, baseURL }) => {
  test.setTimeout(120_000);
  const runId = await runWithTiltedFrame(baseURL!, "Known points refused");
  const api = await apiAs(baseURL!, people.tech);
  const knownPoints = marks.map((m) => ({ ...camera.project(m), tableXCm: m.x, tableYCm: m.y }));
  expect((await api.put(`/api/v1/runs/${runId}/view-setup`, { data: { centre, knownPoints } })).status()).toBe(200);

  await signIn(page, people.tech);
  await page.goto(`/runs/${runId}/setup`);
  await expect(page.getByTestId("known-grid").locator("line")).toHaveCount(10);
  // A table position that is not a number is said at once, on its field.
  await page.getByLabel("Point 2 y").fill("ten");
  await expect(page.getByTestId("known-point-2")).toContainText("That is not a number");
  await expect(page.getByTestId("tilt-readout")).toHaveText("Known point 2 needs its place on the table: x and y in cm, as numbers.");
  await page.getByLabel("Point 2 y").fill("10");
  // Three left: the page says so, and saving is refused by the server in the same words.
  await page.getByRole("button", { name: "Remove point 4" }).click();
  await expect(page.getByTestId("tilt-readout")).toHaveText("3 of at least 4 known points placed.");
  await page.getByRole("button", { name: "Save the view setup" }).click();
  await expect(page.getByTestId("known-error")).toHaveText("A correction from known points needs at least 4 of them; 3 are placed.");
  await expect(page).toHaveURL(new RegExp(`/runs/${runId}/setup$`));
  // What was on the page stays to be put right; what was saved is untouched.
  await expect(page.getByTestId("known-point-3")).toBeVisible();
  if (process.env.SETUP_SHOTS) await page.screenshot({ path: path.join(process.env.SETUP_SHOTS, "known-refused.png"), fullPage: true });
  const saved = (await (await api.get(`/api/v1/runs/${runId}`)).json()) as { viewSetup: { knownPoints: unknown[] } };
  expect(saved.viewSetup.knownPoints).toHaveLength(4);
  // The API refuses the same three points as JSON, with the field.
  const refused = await api.put(`/api/v1/runs/${runId}/view-setup`, { data: { centre, knownPoints: knownPoints.slice(0, 3) } });
  expect(refused.status()).toBe(422);
  expect(((await refused.json()) as { error: { issues: unknown } }).error.issues).toEqual([
    { field: "knownPoints", message: "A correction from known points needs at least 4 of them; 3 are placed." },
  ]);
  await api.dispose();
});
