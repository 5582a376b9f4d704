import { test, expect, type Browser, type Page } from "@playwright/test";
import AxeBuilder from "@axe-core/playwright";
import { people, signIn, waitForMail, latestMailId, linkIn } from "./helpers";
import { pageRoutes, phoneOverflow } from "./phone-width";

// Every page each role can reach, at a desktop and a phone width, checked by axe-core against
// WCAG 2.0 and 2.1, levels A and AA. A "serious" or "critical" violation fails the test, and the
// message names the rule, its impact, where it is on the page and how to fix it.
// The markup does not depend on the database, so this runs in the SQLite pass only.
// At the phone width the same visit also checks that the page does not scroll sideways, and the
// last test proves every page of app/routes.ts was measured so (phone-width.ts).

test.skip(
  (process.env.TEST_DATABASE_URL ?? "").startsWith("postgres"),
  "Accessibility depends on the markup, not the database: checked once, in the SQLite browser pass",
);

const wcagTags = ["wcag2a", "wcag2aa", "wcag21a", "wcag21aa"];
const failingImpacts = new Set(["serious", "critical"]);
const widths = [
  { name: "desktop", width: 1280, height: 800 },
  { name: "phone", width: 390, height: 844 },
] as const;

/**
 * One line per failing node: what to fix, where, and the rule's own explanation.
 *
 * Legacy mode runs axe.run in the page itself instead of gathering partial results and finishing
 * them in a new blank page, which @axe-core/playwright otherwise opens for every analysis; it only
 * gives up testing cross-origin frames, and Tankside's pages have none. Only violations are read, so
 * only violations are collected in full (`resultTypes`): the same rules run on the same nodes. Both
 * halved the time of an analysis here (/runs: 4.1–5.3 s to 2.0–2.5 s on the loaded 2-core machine).
 */
async function seriousViolations(page: Page, widthName: string): Promise<string[]> {
  const results = await new AxeBuilder({ page })
    .withTags(wcagTags)
    .setLegacyMode(true)
    .options({ resultTypes: ["violations"] })
    .analyze();
  const lines: string[] = [];
  for (const v of results.violations) {
    if (!v.impact || !failingImpacts.has(v.impact)) continue;
    for (const node of v.nodes) {
      const target = node.target.map((t) => (Array.isArray(t) ? t.join(" >>> ") : String(t))).join(" ");
      const why = node.failureSummary?.split("\n").slice(1).join(" ").trim();
      lines.push(`[${widthName}] ${v.id} (${v.impact}) at ${target}: ${v.help}${why ? ` — ${why}` : ""} (${v.helpUrl})`);
    }
  }
  return lines;
}

/** Waits until the page is laid out at its current size: fonts loaded, two frames drawn. */
async function settle(page: Page) {
  await page.evaluate(async () => {
    await document.fonts.ready;
    await new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r)));
  });
}

/**
 * Opens a page (or a state of it) and collects serious and critical violations at each width.
 * `open` navigates and brings the page into the state to check, at desktop width; the page is then
 * narrowed to a phone's width in place (nothing in the app renders by width in script, only in
 * CSS, and charts follow their container), so an opened menu or a form's errors stay as they are.
 */
async function expectAccessible(page: Page, what: string, open: () => Promise<void>) {
  const found: string[] = [];
  await page.setViewportSize({ width: widths[0].width, height: widths[0].height });
  await open();
  await page.waitForLoadState("networkidle");
  for (const w of widths) {
    await page.setViewportSize({ width: w.width, height: w.height });
    await settle(page);
    found.push(...(await seriousViolations(page, w.name)));
    if (w.name === "phone") {
      const overflow = await phoneOverflow(page, w.width);
      if (overflow) found.push(`[phone] ${overflow}`);
      measuredAtPhone.add(new URL(page.url()).pathname);
    }
  }
  expect(found, `serious or critical accessibility violations on ${what} (${page.url()})`).toEqual([]);
}

/** Every address measured at the phone width, for the last test's check against the route list. */
const measuredAtPhone = new Set<string>();

function goto(page: Page, path: string, expectStatus = 200) {
  return async () => {
    const res = await page.goto(path);
    expect(res?.status(), `status of ${path}`).toBe(expectStatus);
  };
}

/** A page of its own context (axe needs one), signed in once and reused by a role's tests. */
async function freshPage(browser: Browser) {
  const context = await browser.newContext();
  return context.newPage();
}

async function signedInPage(browser: Browser, email: string) {
  const page = await freshPage(browser);
  await signIn(page, email);
  return page;
}

/** Real records, read through the API as the signed-in person (a list, or a page of `items`). */
async function records(page: Page, apiPath: string): Promise<Record<string, unknown>[]> {
  const res = await page.request.get(apiPath);
  expect(res.status(), apiPath).toBe(200);
  const body = (await res.json()) as Record<string, unknown>[] | { items: Record<string, unknown>[] };
  return Array.isArray(body) ? body : body.items;
}

async function firstId(page: Page, apiPath: string, pick: (row: Record<string, unknown>) => boolean = () => true) {
  const row = (await records(page, apiPath)).find(pick);
  expect(row, `a record from ${apiPath}`).toBeTruthy();
  return Number(row?.id);
}

test.describe("anonymous", () => {
  let page: Page;
  test.beforeAll(async ({ browser }) => {
    page = await freshPage(browser);
  });
  test.afterAll(async () => page.context().close());

  test("sign-in", async () => {
    await expectAccessible(page, "the sign-in page", goto(page, "/sign-in"));
  });

  test("sign-in after a wrong password", async () => {
    await expectAccessible(page, "the sign-in page showing an error", async () => {
      await page.goto("/sign-in");
      await page.getByLabel("E-mail").fill(people.tech);
      await page.getByLabel("Password").fill("not-the-password");
      await page.getByRole("button", { name: "Sign in" }).click();
      await expect(page.getByRole("alert").first()).toBeVisible();
    });
  });

  test("forgot password, before and after sending", async () => {
    await expectAccessible(page, "the forgot-password page", goto(page, "/forgot-password"));
    await expectAccessible(page, "the forgot-password page after sending", async () => {
      await page.goto("/forgot-password");
      await page.getByLabel("E-mail").fill("nobody@tankside.example");
      await page
        .getByRole("button")
        .filter({ hasText: /send|link/i })
        .first()
        .click();
      await page.waitForLoadState("networkidle");
    });
  });

  test("reset-password and invitation pages", async ({ baseURL }) => {
    const after = await latestMailId(baseURL!);
    await page.goto("/forgot-password");
    await page.getByLabel("E-mail").fill(people.instructor);
    await page
      .getByRole("button")
      .filter({ hasText: /send|link/i })
      .first()
      .click();
    const mail = await waitForMail(baseURL!, people.instructor, "", after);
    const resetPath = linkIn(mail.text, "/reset-password/");
    await expectAccessible(page, "the reset-password form", goto(page, resetPath));
    await expectAccessible(page, "the reset-password form after a weak password", async () => {
      await page.goto(resetPath);
      const fields = page.locator('input[type="password"]');
      for (let i = 0; i < (await fields.count()); i++) await fields.nth(i).fill("short");
      await page.locator('main button[type="submit"], main button:not([type])').first().click();
      await expect(page.getByRole("alert").first()).toBeVisible();
    });
    await expectAccessible(page, "a used or unknown reset link", goto(page, "/reset-password/not-a-real-token", 410));
    await expectAccessible(page, "an unknown invitation link", goto(page, "/welcome/not-a-real-token", 410));
  });

  test("page not found", async () => {
    await expectAccessible(page, "the 404 page, signed out", goto(page, "/no-such-page", 404));
  });
});

const commonPages = [
  ["today", "/"],
  ["runs list", "/runs"],
  ["equipment list", "/equipment"],
  ["bookings list, week view and request form", "/bookings"],
  ["calibrations list", "/calibrations"],
  ["account", "/account"],
  ["page not found", "/no-such-page"],
] as const;

for (const [role, email] of [
  ["technician", people.tech],
  ["instructor", people.instructor],
  ["lab manager", people.manager],
] as const) {
  // Every page once for each role; the states of a page that do not depend on who looks (each
  // verdict, each kind of record, a form's errors, an open menu) once, as the lab manager, who sees
  // every control. Axe takes about a second per page and width here, so this keeps the check to a
  // few minutes without leaving a page or a role out.
  const allStates = role === "lab manager";
  test.describe(role, () => {
    let page: Page;
    test.beforeAll(async ({ browser }) => {
      page = await signedInPage(browser, email);
    });
    test.afterAll(async () => page.context().close());

    for (const [label, path] of commonPages) {
      test(label, async () => {
        await expectAccessible(page, `${label} as ${role}`, goto(page, path, path === "/no-such-page" ? 404 : 200));
      });
    }

    test(allStates ? "run pages: one per verdict, one not filmed, a report" : "a run page and its report", async () => {
      test.slow(); // pages with charts and frame strips
      const runs = await records(page, "/api/v1/runs?pageSize=100");
      const byVerdict = new Map<string, number>();
      for (const r of runs) if (typeof r.verdict === "string" && !byVerdict.has(r.verdict)) byVerdict.set(r.verdict, Number(r.id));
      const unfilmed = runs.find((r) => r.frameCount === 0);
      expect(byVerdict.size, "demo runs with a theory check").toBeGreaterThan(0);
      expect(unfilmed, "a demo run without frames").toBeTruthy();
      for (const [verdict, id] of allStates ? byVerdict : [...byVerdict].slice(0, 1)) {
        await expectAccessible(page, `a run whose check ${verdict} as ${role}`, goto(page, `/runs/${id}`));
      }
      if (allStates) await expectAccessible(page, `a run without frames as ${role}`, goto(page, `/runs/${Number(unfilmed?.id)}`));
      const [firstChecked] = byVerdict.values();
      if (allStates) {
        // The frame viewer's removal, chosen as a range and waiting for its confirmation.
        await expectAccessible(page, `a run's frame removal awaiting confirmation as ${role}`, async () => {
          await goto(page, `/runs/${firstChecked}`)();
          await page.getByRole("radio", { name: "A range of frames" }).check();
          await page.getByRole("button", { name: /^Remove frame/ }).click();
          await expect(page.getByTestId("removal-confirmation")).toBeVisible();
        });
      }
      await expectAccessible(page, `a run's printable report as ${role}`, goto(page, `/runs/${firstChecked}/report`));
    });

    if (allStates) {
      test("runs list with the columns menu open", async () => {
        await expectAccessible(page, `the runs list's columns menu as ${role}`, async () => {
          await page.goto("/runs");
          await page.getByText("Columns", { exact: true }).click();
          await expect(page.getByRole("group", { name: "Columns to show" })).toBeVisible();
        });
      });
    }

    test(allStates ? "equipment items and calibration records, one of each kind" : "an equipment item and a calibration record", async () => {
      test.slow(); // about eight pages
      const items = await records(page, "/api/v1/equipment");
      const some = (kinds: Set<string>) => (allStates ? [...kinds] : [...kinds].slice(0, 1));
      for (const kind of some(new Set(items.map((i) => String(i.kind))))) {
        await expectAccessible(page, `a ${kind} as ${role}`, goto(page, `/equipment/${Number(items.find((i) => i.kind === kind)?.id)}`));
      }
      const calibrations = await records(page, "/api/v1/calibrations");
      for (const kind of some(new Set(calibrations.map((c) => String(c.kind))))) {
        await expectAccessible(page, `a ${kind} calibration as ${role}`, goto(page, `/calibrations/${Number(calibrations.find((c) => c.kind === kind)?.id)}`));
      }
      // A record waiting for sign-off, with the sign-off's question open (only a lab manager, who did not perform it, sees it).
      const me = (await (await page.request.get("/api/v1/me")).json()) as { id: number };
      const waiting = calibrations.find((c) => c.signedOffAt === null && c.performedById !== me.id);
      if (allStates && waiting) {
        await expectAccessible(page, `a calibration's sign-off awaiting confirmation as ${role}`, async () => {
          await page.goto(`/calibrations/${Number(waiting.id)}`);
          await page.getByRole("button", { name: "Sign off" }).click();
          await expect(page.getByTestId("sign-off-confirmation")).toBeVisible();
        });
      }
    });

    test("a booking", async () => {
      const booking = await firstId(page, "/api/v1/bookings");
      await expectAccessible(page, `a booking as ${role}`, goto(page, `/bookings/${booking}`));
    });

    if (allStates) {
      test("booking request: a table chosen, then sent empty", async () => {
        await expectAccessible(page, `the booking form with a table chosen as ${role}`, async () => {
          await page.goto("/bookings");
          const equipment = page.getByLabel("Equipment", { exact: true });
          const table = await equipment.locator("option", { hasText: "(rotating table)" }).first().getAttribute("value");
          await equipment.selectOption(table ?? "");
          await expect(page.getByLabel("Planned rate")).toBeVisible();
        });
        await expectAccessible(page, `the booking form after a failed request as ${role}`, async () => {
          await page.goto("/bookings");
          await page.getByRole("button", { name: "Request booking" }).click();
          await expect(page.locator('[aria-invalid="true"]').first()).toBeVisible();
        });
      });
    }

    if (role !== "instructor") {
      test(allStates ? "log a run: empty, then sent with errors" : "log a run", async () => {
        await expectAccessible(page, `the new-run form as ${role}`, goto(page, "/runs/new"));
        if (!allStates) return;
        await expectAccessible(page, `the new-run form after a failed submit as ${role}`, async () => {
          await page.goto("/runs/new");
          await page.getByRole("button", { name: "Log the run" }).click();
          await expect(page.locator('[aria-invalid="true"]').first()).toBeVisible();
        });
      });

      test("edit a run and its view setup", async () => {
        const run = await firstId(page, "/api/v1/runs", (r) => typeof r.verdict === "string");
        await expectAccessible(page, `the run edit form as ${role}`, goto(page, `/runs/${run}/edit`));
        await expectAccessible(page, `the run view setup as ${role}`, goto(page, `/runs/${run}/setup`));
      });

      test(allStates ? "new calibration, empty and after a failed submit" : "new calibration", async () => {
        await expectAccessible(page, `the new-calibration form as ${role}`, goto(page, "/calibrations/new"));
        if (!allStates) return;
        await expectAccessible(page, `the new-calibration form after a failed submit as ${role}`, async () => {
          await page.goto("/calibrations/new");
          await page.locator("main form button[type=submit]").last().click();
          await expect(page.locator('[aria-invalid="true"]').first()).toBeVisible();
        });
      });
    }

    if (role === "lab manager") {
      for (const [label, path] of [
        ["people", "/people"],
        ["captured mail", "/mail"],
        ["settings", "/settings"],
        ["new equipment", "/equipment/new"],
      ] as const) {
        test(label, async () => {
          await expectAccessible(page, `${label} as ${role}`, goto(page, path));
        });
      }

      test("edit equipment and a calibration record", async () => {
        const item = await firstId(page, "/api/v1/equipment");
        await expectAccessible(page, `the equipment edit form as ${role}`, goto(page, `/equipment/${item}/edit`));
        const calibration = await firstId(page, "/api/v1/calibrations");
        await expectAccessible(page, `the calibration edit form as ${role}`, goto(page, `/calibrations/${calibration}/edit`));
      });
    }
  });
}

// Runs last (tests run in file order, one at a time), after every page above was visited.
test("every page in the route list was opened at phone width", () => {
  const missing = pageRoutes().filter((r) => ![...measuredAtPhone].some((path) => r.pattern.test(path)));
  expect(
    missing.map((r) => `/${r.path}`),
    "pages of app/routes.ts that no test above opened (add them to this spec's lists, so axe and the 390 px width check see them)",
  ).toEqual([]);
});
