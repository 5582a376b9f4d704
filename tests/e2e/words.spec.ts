import { expect, test } from "@playwright/test";
import { people, signIn } from "./helpers";

// R-0002 of the demo lab is Priya Castellanos's run; tech@ is Tomas Riedel.
test("a technician turned away from another technician's run is told whose it is, not that their role forbids it", async ({ page }) => {
  await signIn(page, people.tech);
  const response = await page.goto("/runs/2/edit");
  expect(response?.status()).toBe(403);
  await expect(page.getByRole("heading", { level: 1 })).toHaveText("R-0002 is Priya Castellanos's run");
  await expect(page.getByText("Not for your role")).toHaveCount(0);
  await page.getByRole("link", { name: "Open R-0002" }).click();
  await expect(page).toHaveURL(/\/runs\/2$/);
});

test("an instructor turned away from changing a run is told it is their role", async ({ page }) => {
  await signIn(page, people.instructor);
  expect((await page.goto("/runs/2/edit"))?.status()).toBe(403);
  await expect(page.getByRole("heading", { level: 1 })).toHaveText("Not for your role");
});

test("the run page says when a run is ready with its day, and its history says what happened once", async ({ page }) => {
  await signIn(page, people.tech);
  await page.goto("/runs/1");
  const ready = page
    .getByTestId("run-conditions")
    .locator("div")
    .filter({ hasText: /^Ready at/ });
  await expect(ready.locator("dd")).toHaveText(/^\d{1,2} [A-Z][a-z]{2} \d{4}, \d{2}:\d{2}:\d{2} \S+$/);

  const history = page.getByTestId("run-history");
  const logged = history.locator("tbody tr").first();
  await expect(logged.locator("td").nth(2)).toHaveText("Logged");
  await expect(logged).not.toContainText("logged");
});

test("a sort the runs list does not have is refused in words people use", async ({ page }) => {
  await signIn(page, people.tech);
  expect((await page.goto("/runs?sort=bogus"))?.status()).toBe(400);
  await expect(page.getByRole("alert")).toContainText('There is no sort "bogus": the runs list sorts by createdAt (logged), id (run), setRateRpm (set rate)');
});
