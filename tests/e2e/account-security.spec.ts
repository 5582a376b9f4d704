import { expect, request as playwrightRequest, test } from "@playwright/test";
import { apiAs, latestMailId, people, signIn, waitForMail } from "./helpers";

// OWASP ASVS 4.0.3 V2.2.1: the blocked answer must reach the client with the time to wait.
test("a blocked sign-in answers 429 with Retry-After, to a plain form post and to the page's own request", async ({ page, baseURL }) => {
  const email = `throttled-${Date.now()}@tankside.example`;
  const anon = await playwrightRequest.newContext({ baseURL });
  for (let i = 0; i < 5; i++) {
    const res = await anon.post("/sign-in", { form: { email, password: `wrong guess ${i}` }, maxRedirects: 0 });
    expect(res.status()).toBe(401);
  }
  const blocked = await anon.post("/sign-in", { form: { email, password: "wrong guess 5" }, maxRedirects: 0 });
  expect(blocked.status()).toBe(429);
  const retryAfter = Number(blocked.headers()["retry-after"]);
  expect(retryAfter).toBeGreaterThan(880);
  expect(retryAfter).toBeLessThanOrEqual(900);
  await anon.dispose();

  // With JavaScript the page posts to its data URL; the person sees the wait and the header comes along.
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill("wrong guess 6");
  const answer = page.waitForResponse((r) => r.request().method() === "POST" && new URL(r.url()).pathname.startsWith("/sign-in"));
  await page.getByRole("button", { name: "Sign in" }).click();
  const res = await answer;
  expect(Number(await res.headerValue("retry-after"))).toBeGreaterThan(880);
  await expect(page.getByRole("alert").first()).toHaveText("Too many failed attempts. Wait 15 minutes and try again.");
});

test("the account page's current-password check blocks after 5 wrong tries, with Retry-After", async ({ baseURL }) => {
  const instructor = await apiAs(baseURL!, people.instructor);
  const form = (current: string) => ({ intent: "password", current, password: "Moss grows on seven bridges", confirm: "Moss grows on seven bridges" });
  for (let i = 0; i < 5; i++) expect((await instructor.post("/account", { form: form(`wrong guess ${i}`) })).status()).toBe(400);
  const blocked = await instructor.post("/account", { form: form("tankside-demo") });
  expect(blocked.status()).toBe(429);
  expect(Number(blocked.headers()["retry-after"])).toBeGreaterThan(880);
  await instructor.dispose();
  // The password did not change.
  await (await apiAs(baseURL!, people.instructor)).dispose();
});

test("a new API token: chosen lifetime shown, works at once, and its owner gets an e-mail", async ({ page, baseURL }) => {
  const since = await latestMailId(baseURL!);
  await signIn(page, people.tech);
  await page.goto("/account");
  await page.getByLabel("Token name").fill("e2e export script");
  await page.getByLabel("Works for").fill("30");
  await page.getByRole("button", { name: "Create token" }).click();
  const token = (await page.getByTestId("new-token").textContent())!.trim();
  expect(token).toMatch(/^tks_/);
  const item = page.getByRole("listitem").filter({ hasText: "e2e export script" });
  await expect(item).toContainText("never used");
  await expect(item).toContainText("expires");

  const script = await playwrightRequest.newContext({ baseURL, extraHTTPHeaders: { Authorization: `Bearer ${token}` } });
  expect((await script.get("/api/v1/me")).status()).toBe(200);
  await script.dispose();
  const mail = await waitForMail(baseURL!, people.tech, "A new Tankside API token was made", since);
  expect(mail.text).toContain('"e2e export script"');

  await page.reload();
  await expect(page.getByRole("listitem").filter({ hasText: "e2e export script" })).toContainText("last used");
});
