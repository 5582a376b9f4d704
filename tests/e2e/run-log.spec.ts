import { expect, test, request as playwrightRequest, type APIRequestContext } from "@playwright/test";
import { apiAs, people, signIn } from "./helpers";

interface ListedRun {
  id: number;
  label: string;
  state: string;
  purpose: string;
}

const tag = `e2e-${Date.now().toString(36)}`;
let created: ListedRun[] = [];

async function equipmentIds(api: APIRequestContext) {
  const items = (await (await api.get("/api/v1/equipment?status=in_service")).json()) as { id: number; kind: string; name: string }[];
  const first = (kind: string) => items.find((i) => i.kind === kind)!.id;
  return { tableId: first("table"), tankId: first("tank"), cameraId: first("camera") };
}

test.beforeAll(async ({ baseURL }) => {
  // The spec makes the runs it looks for, so it does not depend on what the demo lab holds.
  const tech = await apiAs(baseURL!, people.tech);
  const ids = await equipmentIds(tech);
  created = [];
  for (const [i, purpose] of [`${tag} inertial circles`, `${tag} dye spiral`].entries()) {
    const res = await tech.post("/api/v1/runs", {
      data: {
        ...ids,
        setRateRpm: 8 + i,
        direction: "ccw",
        waterDepthCm: 10,
        waterTemperatureC: 20,
        cameraMode: "rotating",
        frameRateFps: 30,
        tracer: i ? "dye" : "float",
        purpose,
      },
    });
    expect(res.status(), await res.text()).toBe(201);
    created.push((await res.json()) as ListedRun);
  }
  await tech.dispose();
});

for (const email of [people.tech, people.instructor, people.manager]) {
  test(`${email} finds a run by its purpose, opens it and exports it`, async ({ page }) => {
    await signIn(page, email);
    await page.goto("/runs");
    await page.evaluate(() => ((window as unknown as { sameDocument: boolean }).sameDocument = true));
    await page.getByLabel("Text in purpose or notes").fill(`${tag} dye`);
    await page.getByRole("button", { name: "Search" }).click();
    await expect(page).toHaveURL(new RegExp(`q=${tag}\\+dye`));
    const row = page.getByRole("row", { name: new RegExp(`${tag} dye spiral`) });
    await expect(row).toBeVisible();
    await expect(page.getByRole("status").filter({ hasText: /^1 run · page 1 of 1$/ })).toBeVisible();
    // Filtering fetched the page; the document never reloaded.
    expect(await page.evaluate(() => (window as unknown as { sameDocument?: boolean }).sameDocument)).toBe(true);

    const run = created[1]!;
    await row.getByRole("link", { name: run.label }).click();
    await expect(page).toHaveURL(new RegExp(`/runs/${run.id}$`));

    await page.goto(`/runs/${run.id}/report`);
    await expect(page.getByRole("heading", { name: run.label })).toBeVisible();
    await expect(page.getByText("Tracks CSV: no tracks yet")).toBeVisible();
    const download = page.waitForEvent("download");
    await page.getByRole("link", { name: "Run (JSON)" }).click();
    const file = await download;
    expect(file.suggestedFilename()).toBe(`${run.label}.json`);
    const exported = await page.request.get(`/api/v1/runs/${run.id}/export.json`);
    expect(await exported.json()).toMatchObject({
      format: "tankside-run-export",
      conditions: { setRateRpm: 9, tracer: "dye" },
      run: { purpose: `${tag} dye spiral` },
    });
  });
}

test("a filtered view is a link: sorting and paging live in the address, and another person opening it sees the same runs", async ({ page, browser }) => {
  await signIn(page, people.tech);
  await page.goto(`/runs?q=${tag}&pageSize=10`);
  await page.getByRole("button", { name: /^Set rate/ }).click();
  await expect(page).toHaveURL(/sort=setRateRpm/);
  await expect(page.getByRole("columnheader", { name: /Set rate/ })).toHaveAttribute("aria-sort", /ascending|descending/);
  const shown = await page.getByRole("row").filter({ hasText: tag }).allInnerTexts();
  expect(shown).toHaveLength(2);

  const other = await browser.newPage();
  await signIn(other, people.instructor);
  await other.goto(page.url());
  expect(await other.getByRole("row").filter({ hasText: tag }).allInnerTexts()).toEqual(shown);
  await other.close();
});

test("the column choice is remembered for the person", async ({ page }) => {
  await signIn(page, people.instructor);
  await page.goto("/runs");
  await expect(page.getByRole("columnheader", { name: "Purpose" })).toBeVisible();
  await page.getByText("Columns", { exact: true }).click();
  const saved = page.waitForResponse((r) => r.url().includes("/runs") && r.request().method() === "POST");
  await page.getByRole("checkbox", { name: "Purpose" }).uncheck();
  expect((await saved).ok()).toBe(true);
  await expect(page.getByRole("columnheader", { name: "Purpose" })).toHaveCount(0);
  await page.reload();
  await expect(page.getByRole("columnheader", { name: "Run" })).toBeVisible();
  await expect(page.getByRole("columnheader", { name: "Purpose" })).toHaveCount(0);
  // Put it back for the other tests.
  await page.getByText("Columns", { exact: true }).click();
  await page.getByRole("checkbox", { name: "Purpose" }).check();
  await expect(page.getByRole("columnheader", { name: "Purpose" })).toBeVisible();
});

test("bad filters get a clear message on the page and a 400 from the API", async ({ page, baseURL }) => {
  await signIn(page, people.tech);
  const res = await page.goto("/runs?colour=red");
  expect(res?.status()).toBe(400);
  await expect(page.getByRole("alert")).toContainText('Unknown filter "colour"');

  const api = await apiAs(baseURL!, people.tech);
  for (const [query, message] of [
    ["sort=purpose", /There is no sort "purpose": the runs list sorts by createdAt \(logged\)/],
    ["from=2025-02-30", /not a real calendar date/],
    ["page=999", /past the last page/],
  ] as const) {
    const r = await api.get(`/api/v1/runs?${query}`);
    expect(r.status(), query).toBe(400);
    expect((await r.json()).error.message).toMatch(message);
  }
  await api.dispose();
});

test("a wrong or revoked token gets 401, and a tracks export of a run without tracks gets 409", async ({ page, baseURL }) => {
  const anon = await playwrightRequest.newContext({ baseURL });
  const wrong = await anon.get("/api/v1/runs", { headers: { Authorization: "Bearer tks_wrong" } });
  expect(wrong.status()).toBe(401);
  expect((await wrong.json()).error.code).toBe("invalid_token");

  await signIn(page, people.tech);
  await page.goto("/account");
  await page.getByLabel("Token name").fill(`${tag} script`);
  await page.getByRole("button", { name: "Create token" }).click();
  const token = (await page.getByTestId("new-token").textContent())!.trim();
  const auth = { Authorization: `Bearer ${token}` };
  const before = await anon.get("/api/v1/runs?pageSize=10", { headers: auth });
  expect(before.status()).toBe(200);
  expect((await before.json()).pageSize).toBe(10);

  // An edit through the token works while the run is open; then the token is revoked.
  const run = created[0]!;
  const edit = await anon.patch(`/api/v1/runs/${run.id}`, { headers: auth, data: { notes: "Checked the float before release." } });
  expect(edit.status()).toBe(200);
  await page
    .getByRole("listitem")
    .filter({ hasText: `${tag} script` })
    .getByRole("button", { name: "Revoke" })
    .click();
  await expect(page.getByText("Token revoked")).toBeVisible();
  const after = await anon.get("/api/v1/runs", { headers: auth });
  expect(after.status()).toBe(401);
  await anon.dispose();

  // Exporting tracks of a run without any is a 409 with the reason.
  const tech = await apiAs(baseURL!, people.tech);
  const csv = await tech.get(`/api/v1/runs/${run.id}/tracks.csv`);
  expect(csv.status()).toBe(409);
  expect((await csv.json()).error.message).toMatch(/has no tracks yet/);
  await tech.dispose();
});

test("a lab manager signs a checked run off in the browser; it is then read-only and offers a correction", async ({ page, baseURL }) => {
  const manager = await apiAs(baseURL!, people.manager);
  const checked = (await (await manager.get("/api/v1/runs?state=checked&sort=createdAt&dir=asc")).json()) as { items: ListedRun[] };
  test.skip(checked.items.length === 0, "the demo lab has no checked run to sign off");
  const run = checked.items[0]!;

  await signIn(page, people.manager);
  // The printable report carries the sign-off panel too, so this does not depend on the run page's layout.
  await page.goto(`/runs/${run.id}/report`);
  await page.getByLabel(/I have checked the conditions/).check();
  await page.getByRole("button", { name: "Sign off this run" }).click();
  await expect(page.getByTestId("signed-off")).toContainText("Signed off by");
  await expect(page.getByRole("link", { name: "Log a correction" })).toHaveAttribute("href", `/runs/new?supersedes=${run.id}`);

  const edit = await manager.patch(`/api/v1/runs/${run.id}`, { data: { notes: "Changed after sign-off" } });
  expect(edit.status()).toBe(409);
  expect((await edit.json()).error.code).toBe("run_signed_off");
  const detail = await (await manager.get(`/api/v1/runs/${run.id}`)).json();
  expect(detail.state).toBe("signed_off");
  expect(detail.notes).not.toBe("Changed after sign-off");
  expect(detail.history.at(-1)).toMatchObject({ field: "state", newValue: "Signed off" });
  await manager.dispose();
});
