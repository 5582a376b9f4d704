import { test, expect, type Page } from "@playwright/test";
import AxeBuilder from "@axe-core/playwright";
import { apiAs, people, signIn } from "./helpers";

// The keyboard's way around Tankside: the skip link past the header, the navigation's menu at a
// phone's width, and the bookings of the week view, which open with Enter or Space and are
// reached from one another with the arrow keys.

const phone = { width: 390, height: 844 };

async function focusedText(page: Page) {
  return page.evaluate(() => (document.activeElement as HTMLElement | null)?.innerText.trim() ?? "");
}

test("the skip link is the first thing Tab reaches, shows itself and lands on the page", async ({ page }) => {
  await signIn(page, people.manager);
  await page.goto("/runs");
  await page.keyboard.press("Tab");
  const skip = page.getByRole("link", { name: "Skip to the page" });
  await expect(skip).toBeFocused();
  const box = await skip.boundingBox();
  expect(box?.width ?? 0, "the focused skip link is drawn, not clipped to a pixel").toBeGreaterThan(40);
  await page.keyboard.press("Enter");
  await expect(page.locator("main#main")).toBeFocused();
  // The next Tab goes into the page, past every link of the header.
  await page.keyboard.press("Tab");
  expect(await page.evaluate(() => Boolean(document.activeElement?.closest("main")))).toBe(true);
});

test("at phone width the navigation is a menu that opens, closes and is used by keyboard", async ({ page }) => {
  await signIn(page, people.manager);
  await page.setViewportSize(phone);
  await page.goto("/");
  const menu = page.locator("summary", { hasText: "Menu" });
  const nav = page.getByRole("navigation", { name: "Main" });
  await expect(menu).toHaveAttribute("aria-expanded", "false");
  await expect(nav).toBeHidden();
  // The header is one row: the mark and the menu button, not three rows of links.
  const header = await page.locator("body > div > header, header.no-print").first().boundingBox();
  expect(header?.height ?? 1000, "the header's height at phone width").toBeLessThan(90);

  // Skip link, the mark's link, then the menu button.
  await page.keyboard.press("Tab");
  await page.keyboard.press("Tab");
  await page.keyboard.press("Tab");
  await expect(menu).toBeFocused();
  await page.keyboard.press("Enter");
  await expect(menu).toHaveAttribute("aria-expanded", "true");
  await expect(nav).toBeVisible();
  await expect(page.getByRole("button", { name: "Sign out" })).toBeVisible();
  expect(await page.evaluate(() => document.documentElement.scrollWidth), "the open menu fits the screen").toBeLessThanOrEqual(phone.width);
  const axe = await new AxeBuilder({ page }).withTags(["wcag2a", "wcag2aa", "wcag21a", "wcag21aa"]).analyze();
  expect(
    axe.violations.filter((v) => v.impact === "serious" || v.impact === "critical").map((v) => `${v.id}: ${v.nodes.map((n) => n.target.join(" ")).join(", ")}`),
    "axe on the open menu",
  ).toEqual([]);

  // Escape closes it and gives the focus back to its button; Space opens it again.
  await page.keyboard.press("Escape");
  await expect(menu).toHaveAttribute("aria-expanded", "false");
  await expect(menu).toBeFocused();
  await expect(nav).toBeHidden();
  await page.keyboard.press("Space");
  await expect(menu).toHaveAttribute("aria-expanded", "true");

  // Tab to the second section (Runs) and follow it: the page changes and the menu closes.
  await page.keyboard.press("Tab");
  expect(await focusedText(page)).toBe("Today");
  await page.keyboard.press("Tab");
  expect(await focusedText(page)).toBe("Runs");
  await page.keyboard.press("Enter");
  await expect(page).toHaveURL(/\/runs$/);
  await expect(page.getByRole("heading", { level: 1, name: "Runs" })).toBeVisible();
  await expect(menu).toHaveAttribute("aria-expanded", "false");
  await expect(nav).toBeHidden();
});

test("the week view's bookings open with Enter and Space, and arrow keys move between them", async ({ page, baseURL }) => {
  // Three requests of their own, far from the demo's dates: two on a Tuesday, one on the Thursday.
  const instructor = await apiAs(baseURL!, people.instructor);
  const equipment = (await (await instructor.get("/api/v1/equipment")).json()) as { id: number; kind: string; status: string }[];
  const camera = equipment.find((e) => e.kind === "camera" && e.status === "in_service");
  expect(camera, "a camera to book").toBeTruthy();
  const ids: number[] = [];
  for (const [day, from, to] of [
    ["2031-03-04", "09:00", "10:00"],
    ["2031-03-04", "14:00", "15:00"],
    ["2031-03-06", "11:00", "12:00"],
  ] as const) {
    const res = await instructor.post("/api/v1/bookings", {
      data: { equipmentId: camera?.id, start: `${day}T${from}:00Z`, end: `${day}T${to}:00Z`, purpose: `Keyboard walk ${day} ${from}` },
    });
    expect(res.status(), await res.text()).toBe(201);
    ids.push(Number(((await res.json()) as { id: number }).id));
  }
  const [tueMorning, tueAfternoon, thursday] = ids;

  await signIn(page, people.manager);
  await page.goto(`/bookings?item=${camera?.id}&week=2031-03-03#week`);
  const week = page.getByTestId("booking-week");
  const booking = (id: number | undefined) => week.locator(`a[data-booking="${id}"]`);
  await expect(booking(tueMorning)).toBeVisible();
  // Real links to the booking, named with their day.
  await expect(booking(tueMorning)).toHaveAttribute("href", `/bookings/${tueMorning}`);
  await expect(booking(thursday)).toHaveAccessibleName(/^Thursday 6 March, .*Keyboard walk 2031-03-06/);

  await booking(tueMorning).focus();
  await page.keyboard.press("ArrowDown");
  await expect(booking(tueAfternoon)).toBeFocused();
  await page.keyboard.press("ArrowUp");
  await expect(booking(tueMorning)).toBeFocused();
  await page.keyboard.press("ArrowRight"); // Wednesday is empty: on to Thursday
  await expect(booking(thursday)).toBeFocused();
  await page.keyboard.press("ArrowRight"); // nothing later this week: the focus stays
  await expect(booking(thursday)).toBeFocused();
  await page.keyboard.press("ArrowLeft"); // back to Tuesday, the booking nearest in time (11:00 → 09:00)
  await expect(booking(tueMorning)).toBeFocused();
  await page.keyboard.press("End");
  await expect(booking(thursday)).toBeFocused();
  await page.keyboard.press("Home");
  await expect(booking(tueMorning)).toBeFocused();

  await page.keyboard.press("Enter");
  await expect(page).toHaveURL(new RegExp(`/bookings/${tueMorning}$`));
  await page.goBack();
  await booking(thursday).focus();
  await page.keyboard.press("Space");
  await expect(page).toHaveURL(new RegExp(`/bookings/${thursday}$`));

  // Cancel the three, so the demo's lists are as they were.
  for (const id of ids) expect((await instructor.post(`/api/v1/bookings/${id}/cancel`)).status()).toBe(200);
});
