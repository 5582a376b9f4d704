import { expect, test } from "@playwright/test";
import { people, signIn } from "./helpers";

const rows = (page: import("@playwright/test").Page) => page.locator('tbody tr[data-testid^="calibration-"]');

test("the calibrations list filters by kind, item, standing and text, with the filters in the address", async ({ page }) => {
  await signIn(page, people.manager);
  await page.goto("/calibrations");
  const all = await rows(page).count();
  expect(all).toBeGreaterThan(2);
  await expect(page.getByRole("heading", { name: `${all} records` })).toBeVisible();

  // A choice applies at once and lands in the address.
  await page.getByLabel("Standing").selectOption("draft");
  await expect(page).toHaveURL(/[?&]standing=draft\b/);
  // The address changes as the navigation commits; the filtered list is read once it is drawn.
  await expect(page.getByRole("heading", { name: new RegExp(`^\\d+ of ${all} records match$`) })).toBeVisible();
  const drafts = await rows(page).count();
  expect(drafts).toBeGreaterThan(0);
  expect(drafts).toBeLessThan(all);
  await expect(page.getByRole("heading", { name: `${drafts} of ${all} records match` })).toBeVisible();
  for (const row of await rows(page).all()) await expect(row).toContainText("Awaiting sign-off");

  // The dashboard's list of records waiting for sign-off holds the same records.
  const listed = await rows(page).evaluateAll((trs) => trs.map((tr) => tr.getAttribute("data-testid")!.replace("calibration-", "")).sort());
  await page.goto("/");
  const onDashboard = await page
    .getByTestId("dashboard-calibration-sign-off")
    .locator("a")
    .evaluateAll((links) => links.map((a) => a.getAttribute("href")!.replace("/calibrations/", "")).sort());
  expect(onDashboard).toEqual(listed);

  // Kind and text together, from a shared link.
  await page.goto("/calibrations?kind=scale");
  const scale = await rows(page).count();
  expect(scale).toBeGreaterThan(0);
  for (const row of await rows(page).all()) await expect(row).toContainText("Scale calibration");
  await expect(page.getByLabel("Kind")).toHaveValue("scale");

  // Text in the item's name, whatever its case; no match says so.
  await page.goto("/calibrations");
  await page.getByLabel("Text in item, person or notes").fill("TABLE A");
  await page.getByRole("button", { name: "Search" }).click();
  await expect(page).toHaveURL(/[?&]q=TABLE\+A\b/);
  await expect(page.getByRole("heading", { name: new RegExp(`^\\d+ of ${all} records match$`) })).toBeVisible();
  expect(await rows(page).count()).toBeGreaterThan(0);
  for (const row of await rows(page).all()) await expect(row).toContainText("Table A");
  await page.getByLabel("Text in item, person or notes").fill("no such words anywhere");
  await page.getByRole("button", { name: "Search" }).click();
  await expect(page.getByText("No records match these filters.")).toBeVisible();
  await page.getByRole("link", { name: "Clear filters" }).click();
  await expect(rows(page)).toHaveCount(all);
});

test("a filter the calibrations list cannot use is refused with a 400 and a message that says what can be used", async ({ page }) => {
  await signIn(page, people.tech);
  const response = await page.goto("/calibrations?kind=speed");
  expect(response?.status()).toBe(400);
  await expect(page.getByText("These filters cannot be used")).toBeVisible();
  await expect(page.getByText(/There is no kind "speed": kind is one of rate \(rate calibration\)/)).toBeVisible();
  await expect(rows(page)).toHaveCount(0);
  await page.getByRole("link", { name: "Show every record" }).click();
  await expect(rows(page).first()).toBeVisible();

  expect((await page.goto("/calibrations?colour=red"))?.status()).toBe(400);
  await expect(page.getByText(/Unknown filter "colour"/)).toBeVisible();
});
