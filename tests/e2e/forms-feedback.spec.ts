import fs from "node:fs";
import path from "node:path";
import { expect, test, type Page } from "@playwright/test";
import { apiAs, logRunThroughForm, people, signIn } from "./helpers";
import { renderStackToDir } from "../fixtures/render-stack";
import { zip } from "../support/zip-writer";

const NOT_A_NUMBER = /That is not a number/;

/** The first in-service item of a kind in the demo lab. */
async function firstOf(page: Page, kind: string) {
  const items = (await (await page.request.get("/api/v1/equipment")).json()) as { id: number; kind: string; name: string; status: string }[];
  const item = items.find((i) => i.kind === kind && i.status === "in_service");
  expect(item, `an in-service ${kind}`).toBeDefined();
  return item!;
}

test("the run form takes a decimal comma and says 'not a number' for words, on the field", async ({ page }) => {
  await signIn(page, people.tech);
  await page.goto("/runs/new");
  await page.getByLabel("Set rate").fill("ten");
  await page.getByLabel("Water depth (at rest)").fill("12,5");
  await page.getByLabel("Water temperature").fill("20");
  await page.getByLabel("Purpose").fill("Decimal comma in the run form");
  await page.getByRole("button", { name: "Log the run" }).click();
  const rate = page.getByLabel("Set rate");
  await expect(rate).toHaveAttribute("aria-invalid", "true");
  await expect(page.locator("#setRateRpm-error")).toHaveText(NOT_A_NUMBER);
  await expect(page.getByLabel("Water depth (at rest)")).not.toHaveAttribute("aria-invalid", "true");
  // The unit is shown beside the field.
  await expect(page.getByText("rpm", { exact: true }).first()).toBeVisible();

  await rate.fill("10,5");
  await page.getByRole("button", { name: "Log the run" }).click();
  await expect(page).toHaveURL(/\/runs\/\d+$/);
  const id = /\/runs\/(\d+)$/.exec(page.url())![1];
  const run = (await (await page.request.get(`/api/v1/runs/${id}`)).json()) as { conditions: { setRateRpm: number; waterDepthM: number } };
  expect(run.conditions.setRateRpm).toBe(10.5);
  expect(run.conditions.waterDepthM).toBeCloseTo(0.125, 12);
});

test("the calibration form outlines every bad reading at once, each with its own message", async ({ page }) => {
  await signIn(page, people.tech);
  await page.goto("/calibrations/new?kind=rate");
  await page.getByLabel("Table").selectOption({ label: "Table A (east bench)" });
  await page.getByLabel("Set rate 1", { exact: true }).fill("five");
  await page.getByLabel("Measured rate 1", { exact: true }).fill("5,01");
  await page.getByLabel("Set rate 2", { exact: true }).fill("10");
  await page.getByLabel("Measured rate 2", { exact: true }).fill("x");
  await page.getByRole("button", { name: "Save the record" }).click();
  await expect(page.getByLabel("Set rate 1", { exact: true })).toHaveAttribute("aria-invalid", "true");
  await expect(page.getByLabel("Measured rate 1", { exact: true })).not.toHaveAttribute("aria-invalid", "true");
  await expect(page.getByLabel("Measured rate 2", { exact: true })).toHaveAttribute("aria-invalid", "true");
  await expect(page.getByText(/Set rate: That is not a number/)).toBeVisible();
  await expect(page.getByText(/Measured rate: That is not a number/)).toBeVisible();
  // The same first submit says what else the record needs, each on its own field: the rate meter
  // (outlined, its message tied to it) and the number of readings (on the readings' group).
  const meter = page.getByLabel("Rate meter used");
  await expect(meter).toHaveAttribute("aria-invalid", "true");
  await expect(page.locator("#meterId-error")).toHaveText("Choose the rate meter the readings were taken with.");
  await expect(meter).toHaveAttribute("aria-describedby", /meterId-error/);
  await expect(page.locator("#readings-error")).toHaveText("Enter readings at 3 or more set rates (2 entered).");
  await expect(page.getByRole("group", { name: "Readings" })).toHaveAttribute("aria-describedby", "readings-error");
  await expect(page).toHaveURL(/\/calibrations\/new/);
});

test("sign-off asks first, and the lab manager who performed a calibration cannot sign it", async ({ page, baseURL }) => {
  // A record by the technician: the lab manager signs it after confirming.
  const tech = await apiAs(baseURL!, people.tech);
  const camera = (await (await tech.get("/api/v1/equipment?kind=camera&status=in_service")).json()) as { id: number }[];
  const day = new Date(Date.now() - 86_400_000).toISOString().slice(0, 10);
  const scale = {
    kind: "scale",
    equipmentId: camera[0]!.id,
    performedOn: day,
    knownLengthMm: 500,
    knownLengthUncertaintyMm: 0.5,
    lengthPx: 812,
    lengthUncertaintyPx: 1,
  };
  const made = await tech.post("/api/v1/calibrations", { data: scale });
  expect(made.status()).toBe(201);
  const byTech = (await made.json()) as { id: number };
  await tech.dispose();

  await signIn(page, people.manager);
  await page.goto(`/calibrations/${byTech.id}`);
  await page.getByRole("button", { name: "Sign off" }).click();
  const ask = page.getByTestId("sign-off-confirmation");
  await expect(ask).toContainText(`Sign off calibration #${byTech.id}?`);
  await expect(ask).toContainText(/can never be changed/);
  await expect(page.getByText(`Sign off calibration #${byTech.id}?`)).toBeFocused();
  // Nothing is signed by the first click, and "Not yet" takes the question away.
  expect(((await (await page.request.get(`/api/v1/calibrations/${byTech.id}`)).json()) as { signedOffAt: string | null }).signedOffAt).toBeNull();
  await page.getByRole("button", { name: "Not yet" }).click();
  await expect(ask).toBeHidden();
  await page.getByRole("button", { name: "Sign off" }).click();
  await page.getByRole("button", { name: "Yes, sign it off" }).click();
  await expect(page.getByText(/Signed off\. From now on/)).toBeVisible();
  expect(((await (await page.request.get(`/api/v1/calibrations/${byTech.id}`)).json()) as { signedOffAt: string | null }).signedOffAt).not.toBeNull();

  // A record the lab manager performed: no sign-off button, the reason said, and the API refuses it.
  const mine = await page.request.post("/api/v1/calibrations", { data: { ...scale, performedOn: day } });
  expect(mine.status()).toBe(201);
  const own = (await mine.json()) as { id: number };
  await page.goto(`/calibrations/${own.id}`);
  await expect(page.getByTestId("sign-off-blocked")).toContainText("another lab manager must check and sign it");
  await expect(page.getByRole("button", { name: "Sign off" })).toHaveCount(0);
  const refused = await page.request.post(`/api/v1/calibrations/${own.id}/sign-off`);
  expect(refused.status()).toBe(403);
  expect(((await refused.json()) as { error: { code: string } }).error.code).toBe("second_person_required");
});

test("a booking decision and an overlap refusal are said beside the row clicked, and the address keeps no ?index", async ({ page, baseURL }) => {
  await signIn(page, people.manager);
  const table = await firstOf(page, "table");
  // Two requests for the same hour, 40 days ahead, by two people.
  const slot = new Date(Date.now() + 40 * 86_400_000);
  slot.setUTCHours(8, 0, 0, 0);
  const body = { equipmentId: table.id, start: slot.toISOString(), end: new Date(slot.getTime() + 3_600_000).toISOString() };
  const ids: number[] = [];
  for (const who of [people.tech, people.instructor]) {
    const api = await apiAs(baseURL!, who);
    const made = await api.post("/api/v1/bookings", { data: { ...body, purpose: `Overlap test by ${who}` } });
    expect(made.status()).toBe(201);
    ids.push(((await made.json()) as { id: number }).id);
    await api.dispose();
  }
  const [first, second] = ids as [number, number];
  await page.goto(`/bookings?equipmentId=${table.id}&from=${slot.toISOString().slice(0, 10)}`);
  const firstRow = page.getByTestId(`booking-${first}`);
  const secondRow = page.getByTestId(`booking-${second}`);
  await firstRow.getByRole("button", { name: "Approve" }).click();
  await expect(page.getByTestId(`booking-${first}-outcome`)).toHaveText(`Booking #${first} approved.`);
  await expect(firstRow).toContainText("Approved");
  await secondRow.getByRole("button", { name: "Approve" }).click();
  const refusal = page.getByTestId(`booking-${second}-outcome`);
  await expect(refusal).toContainText(`Booking #${second}:`);
  await expect(refusal).toHaveAttribute("aria-live", "polite");
  // Said in the row itself, within a screen of the button, not at the top of the page.
  const button = await secondRow.getByRole("button", { name: "Approve" }).boundingBox();
  const said = await refusal.boundingBox();
  expect(Math.abs(said!.y - button!.y)).toBeLessThan(300);
  expect(new URL(page.url()).search).not.toContain("index");
});

test("the invitation form can be used twice in a row: the role starts again as technician", async ({ page }) => {
  await signIn(page, people.manager);
  await page.goto("/people");
  for (const who of ["Ines Forms", "Jon Forms"]) {
    const email = `${who.toLowerCase().replace(" ", ".")}@tankside.example`;
    await page.getByLabel("Name", { exact: true }).fill(who);
    await page.getByLabel("E-mail", { exact: true }).fill(email);
    await page.getByRole("button", { name: "Send invitation", exact: true }).click();
    await expect(page.getByText(`Invitation sent to ${email}.`)).toBeVisible();
    await expect(page.getByLabel("Role", { exact: true })).toHaveValue("technician");
    await expect(page.getByLabel("Name", { exact: true })).toHaveValue("");
  }
  // An empty try after a success: the old "sent" banner gives way to the new errors.
  await page.getByRole("button", { name: "Send invitation", exact: true }).click();
  await expect(page.getByText("Enter the person's name.")).toBeVisible();
  await expect(page.getByText(/Invitation sent to/)).toHaveCount(0);
});

test("a people row's action is answered in that row, far down the list, and the last answer gives way", async ({ page, baseURL }) => {
  // Enough people that the last rows start well below the first screen (sorted by name: "Zz…" last).
  const manager = await apiAs(baseURL!, people.manager);
  const emails: string[] = [];
  const tag = Date.now().toString(36);
  for (let i = 1; i <= 8; i++) {
    const email = `zz.row${i}.${tag}@tankside.example`;
    const made = await manager.post("/people", { form: { intent: "invite", name: `Zz Row ${i} ${tag}`, email, role: "technician" } });
    expect(made.status()).toBe(200);
    emails.push(email);
  }
  await manager.dispose();
  await page.setViewportSize({ width: 1366, height: 700 });
  await signIn(page, people.manager);
  await page.goto("/people");
  const row = page.getByTestId(`person-${emails[7]}`);
  const rowTop = await row.evaluate((el) => el.getBoundingClientRect().top + window.scrollY);
  expect(rowTop, "the row starts below the first screen").toBeGreaterThan(700);

  await row.getByRole("button", { name: "Send invitation again" }).click();
  const outcome = row.locator('[role="status"]');
  await expect(outcome).toHaveText("Invitation sent again.");
  await expect(outcome).toHaveAttribute("aria-live", "polite");
  await expect(outcome).toBeInViewport();
  // Said in the row only: nothing at the top of the page.
  await expect(page.getByText("Invitation sent again.")).toHaveCount(1);
  const said = await outcome.boundingBox();
  const button = await row.getByRole("button", { name: "Send invitation again" }).boundingBox();
  expect(Math.abs(said!.y - button!.y)).toBeLessThan(200);

  // The next action on the row clears the last answer before its own comes.
  await row.getByLabel(`Role of Zz Row 8 ${tag}`).selectOption("instructor");
  await row.getByRole("button", { name: "Set" }).click();
  await expect(outcome).toHaveText("Role changed to instructor.");
  await expect(page.getByText("Invitation sent again.")).toHaveCount(0);
  await row.getByRole("button", { name: "Deactivate" }).click();
  await expect(outcome).toHaveText("Deactivated and signed out everywhere.");
  await expect(outcome).toBeInViewport();
  await expect(page.getByText("Role changed to instructor.")).toHaveCount(0);
  await expect(row.getByText("deactivated", { exact: true })).toBeVisible();
});

test("the view setup's number fields edit as numbers: 12.5 stays, a comma reads, a negative scale is refused", async ({ page, baseURL }) => {
  test.setTimeout(240_000);
  const stack = await renderStackToDir({ frames: 3, rpm: 10 });
  const tech = await apiAs(baseURL!, people.tech);
  const runId = await logRunThroughForm(tech, { setRateRpm: "10", purpose: "View setup number fields" });
  for (const file of stack.files) {
    const up = await tech.post(`/api/v1/runs/${runId}/frames`, {
      multipart: { file: { name: file.split("/").pop()!, mimeType: "image/png", buffer: fs.readFileSync(file) } },
    });
    expect(up.status()).toBe(201);
  }
  await tech.dispose();

  const problems: string[] = [];
  page.on("console", (m) => {
    if (m.type() === "error") problems.push(m.text());
  });
  await signIn(page, people.tech);
  await page.goto(`/runs/${runId}/setup`);
  // Two scale points, far apart.
  await page.getByRole("button", { name: "Scale (2 points)" }).click();
  const overlay = page.getByTestId("setup-overlay");
  const box = (await overlay.boundingBox())!;
  await overlay.click({ position: { x: box.width * 0.2, y: box.height / 2 } });
  await overlay.click({ position: { x: box.width * 0.8, y: box.height / 2 } });

  const length = page.getByLabel("Known length between the two points");
  await length.pressSequentially("12.5");
  await expect(length).toHaveValue("12.5");
  await expect(page.getByTestId("scale-readout")).toContainText("px per cm");
  const at125 = await page.getByTestId("scale-readout").textContent();
  await length.fill("12,5");
  await expect(length).toHaveValue("12,5");
  await expect(page.getByTestId("scale-readout")).toHaveText(at125!);

  await length.fill("-6");
  await expect(page.getByText("The known length must be more than 0 cm.")).toBeVisible();
  await expect(page.getByTestId("scale-readout")).not.toContainText("-");
  await length.fill("ten");
  await expect(page.getByText(NOT_A_NUMBER)).toBeVisible();

  // The centre typed with a decimal point: the field keeps "320." while it is typed.
  const column = page.getByLabel("Column").first();
  await column.fill("");
  await column.pressSequentially("100.");
  await expect(column).toHaveValue("100.");
  await column.pressSequentially("5");
  await expect(column).toHaveValue("100.5");
  await expect(page.getByTestId("mark-centre")).toContainText("100.5");
  expect(problems.filter((p) => /NaN|attribute|svg/i.test(p))).toEqual([]);
});

test("the run page sends a ZIP as kind=zip and a frame as one frame, so each gets its own limit", async ({ page, baseURL }) => {
  const stack = await renderStackToDir({ frames: 4, rpm: 10 });
  const tech = await apiAs(baseURL!, people.tech);
  const runId = await logRunThroughForm(tech, { setRateRpm: "10", purpose: "ZIP upload declares its kind" });
  await tech.dispose();
  const [first, ...rest] = stack.files;
  const archive = zip(rest.map((file) => ({ name: path.basename(file), data: fs.readFileSync(file) })));
  await signIn(page, people.tech);
  await page.goto(`/runs/${runId}`);
  const sent: string[] = [];
  page.on("request", (r) => {
    if (r.method() === "POST" && r.url().includes(`/api/v1/runs/${runId}/frames`)) sent.push(new URL(r.url()).search);
  });
  await page.getByLabel("Choose frames, a ZIP or a video").setInputFiles([
    { name: path.basename(first!), mimeType: "image/png", buffer: fs.readFileSync(first!) },
    { name: "stack.zip", mimeType: "application/zip", buffer: archive },
  ]);
  await expect(page.getByRole("heading", { name: "Frame stack (4)" })).toBeVisible({ timeout: 60_000 });
  expect(sent.sort()).toEqual(["", "?kind=zip"]);
});
