import { expect, test } from "@playwright/test";
import { people, signIn } from "./helpers";

// The theory-check plots of a checked demo run (R-0001): every axis label whole and inside its
// chart, time axes ticked at round steps, and a key whose marks are drawn and whose words are ink.
test("the theory-check plots keep their labels whole, tick time at round values and draw every key mark", async ({ page }) => {
  await signIn(page, people.instructor);
  await page.goto("/runs/1");
  const plots = page.getByTestId("theory-plots").locator("figure");
  await expect(plots).toHaveCount(5);

  for (const figure of await plots.all()) {
    const svg = figure.locator("svg.recharts-surface");
    const box = (await svg.boundingBox())!;
    const labels = figure.locator(".recharts-label");
    expect(await labels.count()).toBeGreaterThanOrEqual(2);
    for (const label of await labels.all()) {
      const text = (await label.textContent()) ?? "";
      // Whole: one line, its brackets closed (a cut or wrapped label lost the end).
      expect(text).toMatch(/^[^()]*\([^()]+\)$/);
      const b = (await label.boundingBox())!;
      expect(b.x, `${text}: left edge inside the plot`).toBeGreaterThanOrEqual(box.x - 0.5);
      expect(b.y, `${text}: top edge inside the plot`).toBeGreaterThanOrEqual(box.y - 0.5);
      expect(b.x + b.width, `${text}: right edge inside the plot`).toBeLessThanOrEqual(box.x + box.width + 0.5);
      expect(b.y + b.height, `${text}: bottom edge inside the plot`).toBeLessThanOrEqual(box.y + box.height + 0.5);
    }
  }

  const coriolis = plots.filter({ hasText: "Coriolis acceleration" });
  await expect(coriolis.locator(".recharts-label").filter({ hasText: "acceleration" })).toHaveText("acceleration (cm/s²)");

  // Time axes: ticks a round step apart (1, 2 or 5 × 10ⁿ), starting on a multiple of it.
  for (const title of ["Direction of motion against time", "Residuals of the acceleration fit"]) {
    const ticks = (await plots.filter({ hasText: title }).locator(".recharts-xAxis-tick-labels .recharts-cartesian-axis-tick-value").allTextContents()).map(
      Number,
    );
    expect(ticks.length, title).toBeGreaterThanOrEqual(3);
    const step = ticks[1]! - ticks[0]!;
    const mantissa = step / 10 ** Math.floor(Math.log10(step));
    expect(
      [1, 2, 5].some((m) => Math.abs(mantissa - m) < 1e-9),
      `${title}: step ${step}`,
    ).toBe(true);
    for (const t of ticks) expect(Math.abs(t / step - Math.round(t / step)), `${title}: tick ${t}`).toBeLessThan(1e-9);
  }

  // The key: the 2Ω entry draws a dashed line, the fit a solid one, and the words are ink, not amber.
  const key = coriolis.getByTestId("plot-legend");
  const theory = key.locator("li").filter({ hasText: "2Ω" });
  await expect(theory.locator("line")).toHaveAttribute("stroke-dasharray", "6 4");
  // Four figures, so a fit a fraction of a per cent off 2Ω does not read the same as 2Ω (R-0001 turns at 10 rpm).
  await expect(theory).toHaveText(/2Ω = 2\.09\d 1\/s/);
  await expect(key.locator("li").filter({ hasText: "fit, f =" })).toHaveText(/f = \d\.\d{3} 1\/s/);
  expect(Number(await theory.locator("line").getAttribute("stroke-width"))).toBeGreaterThan(0);
  const fit = key.locator("li").filter({ hasText: "fit, f =" });
  await expect(fit.locator("line")).toHaveAttribute("stroke", "#c27c00");
  const colour = await fit.evaluate((el) => getComputedStyle(el).color);
  const [r, g, b] = colour.match(/\d+/g)!.map(Number) as [number, number, number];
  const lum = (c: number) => {
    const s = c / 255;
    return s <= 0.03928 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
  };
  const contrast = 1.05 / (0.2126 * lum(r) + 0.7152 * lum(g) + 0.0722 * lum(b) + 0.05);
  expect(contrast, `legend text ${colour} on white`).toBeGreaterThanOrEqual(4.5);
});
