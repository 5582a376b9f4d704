import { expect, test } from "@playwright/test";
import AxeBuilder from "@axe-core/playwright";
import { apiAs, people, signIn } from "./helpers";

interface ListedRun {
  id: number;
  label: string;
  verdict: string | null;
}

test("a technician logs a correction of a signed-off run and reads its verdict without uploading the frames again", async ({ page, baseURL }) => {
  test.setTimeout(240_000);
  const manager = await apiAs(baseURL!, people.manager);
  // The newest checked demo run with frames; the run-log spec signs off the oldest one.
  const checked = (await (await manager.get("/api/v1/runs?state=checked&sort=createdAt&dir=desc")).json()) as { items: ListedRun[] };
  test.skip(checked.items.length < 2, "the demo lab has too few checked runs to sign one off here");
  const original = checked.items[0]!;
  const signed = await manager.post(`/api/v1/runs/${original.id}/sign-off`);
  expect(signed.status()).toBe(200);
  const detail = (await (await manager.get(`/api/v1/runs/${original.id}`)).json()) as { frames: { count: number }; viewSetup: unknown };
  await manager.dispose();
  expect(detail.frames.count).toBeGreaterThanOrEqual(3);
  expect(detail.viewSetup).not.toBeNull();

  await signIn(page, people.tech);
  await page.goto(`/runs/${original.id}`);
  const originalVerdict = (await page.getByTestId("verdict").textContent())?.trim();
  expect(originalVerdict).toBeTruthy();
  await page.getByRole("link", { name: "Log a correction" }).click();
  await expect(page).toHaveURL(new RegExp(`/runs/new\\?supersedes=${original.id}$`));

  // The form says what comes over before anything is logged.
  const carried = page.getByTestId("carried-over");
  await expect(carried).toContainText(`Carried over from ${original.label}`);
  await expect(carried).toContainText(`Frames: ${detail.frames.count} (stored once, shared with ${original.label}; no upload needed)`);
  await expect(carried).toContainText("View setup: the same centre, tank edge and scale");
  await expect(carried).toContainText("Rate reached at:");
  await expect(page.getByLabel("Leave the frames out: I will upload new ones")).not.toBeChecked();

  // The panel passes the same accessibility check as every page (WCAG 2.0/2.1 A and AA, serious or critical).
  const axe = await new AxeBuilder({ page }).include('[data-testid="carried-over"]').withTags(["wcag2a", "wcag2aa", "wcag21a", "wcag21aa"]).analyze();
  expect(axe.violations.filter((v) => v.impact === "serious" || v.impact === "critical").map((v) => `${v.id}: ${v.help}`)).toEqual([]);

  await page.getByLabel("Notes").fill("Correction: the thermometer was read again after the run.");
  await page.getByRole("button", { name: "Log the run" }).click();
  await expect(page).not.toHaveURL(/\/runs\/new/);
  await expect(page.getByTestId("supersedes-links")).toContainText(`This run corrects ${original.label}`);

  // Tracked and checked at once: the verdict appears with no upload and no view setup done here.
  await expect(page.getByTestId("tracking-panel")).toContainText("Done", { timeout: 180_000 });
  await page.reload();
  await expect(page.getByTestId("verdict")).toHaveText(originalVerdict!, { timeout: 60_000 });
  await expect(page.getByTestId("filmstrip").getByRole("img")).toHaveCount(detail.frames.count);
  await expect(page.getByTestId("shared-frames")).toHaveText(
    `${detail.frames.count} of these frames are the files of ${original.label}, stored once and shared with it.`,
  );
});
