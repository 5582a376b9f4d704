import { expect, test, request as playwrightRequest } from "@playwright/test";
import { apiAs, latestMailId, linkIn, people, signIn, waitForMail } from "./helpers";

const navFor = {
  [people.manager]: ["Today", "Runs", "Equipment", "Bookings", "Calibrations", "People", "Captured mail", "Settings"],
  [people.tech]: ["Today", "Runs", "Equipment", "Bookings", "Calibrations"],
  [people.instructor]: ["Today", "Runs", "Equipment", "Bookings", "Calibrations"],
};

test.describe("sign-in, navigation and sign-out for each role", () => {
  for (const [email, expected] of Object.entries(navFor)) {
    test(`${email} signs in, sees their navigation, signs out`, async ({ page }) => {
      await signIn(page, email);
      const nav = page.getByRole("navigation", { name: "Main" });
      await expect(nav.getByRole("link")).toHaveText(expected);
      await page.getByRole("button", { name: "Sign out" }).click();
      await expect(page).toHaveURL(/\/sign-in$/);
      await page.goto("/account");
      await expect(page).toHaveURL(/\/sign-in\?redirectTo=%2Faccount$/);
    });
  }
});

test("a wrong password and an unknown e-mail get the same message", async ({ page }) => {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(people.tech);
  await page.getByLabel("Password").fill("not-the-password");
  await page.getByRole("button", { name: "Sign in" }).click();
  const message = page.getByRole("alert").first();
  await expect(message).toHaveText("That e-mail and password do not match an active account.");
  await page.getByLabel("E-mail").fill("nobody@tankside.example");
  await page.getByLabel("Password").fill("not-the-password");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("alert").first()).toHaveText("That e-mail and password do not match an active account.");
});

test("redirectTo survives sign-in but a forged one stays inside the app", async ({ page }) => {
  await page.goto("/equipment");
  await expect(page).toHaveURL(/redirectTo=%2Fequipment/);
  await page.getByLabel("E-mail").fill(people.instructor);
  await page.getByLabel("Password").fill("tankside-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page).toHaveURL(/\/equipment$/);
  await page.getByRole("button", { name: "Sign out" }).click();
  // The sign-out has landed before the next address is opened: a navigation started earlier cancels it.
  await expect(page).toHaveURL(/\/sign-in$/);

  await page.goto("/sign-in?redirectTo=https%3A%2F%2Fevil.example%2Fx");
  await page.getByLabel("E-mail").fill(people.instructor);
  await page.getByLabel("Password").fill("tankside-demo");
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page).toHaveURL(/127\.0\.0\.1:\d+\/$/);
});

test("a page beyond the role shows the 403 page, an unknown address the 404 page", async ({ page }) => {
  await signIn(page, people.tech);
  const res = await page.goto("/people");
  expect(res?.status()).toBe(403);
  await expect(page.getByTestId("error-status")).toHaveText("403");
  await expect(page.getByRole("heading", { name: "Not for your role" })).toBeVisible();
  const missing = await page.goto("/no-such-page");
  expect(missing?.status()).toBe(404);
  await expect(page.getByRole("heading", { name: "Nothing here" })).toBeVisible();
});

test("API: 401 anonymous, 403 beyond the role, 200 with the contract's shape", async ({ baseURL }) => {
  const anon = await playwrightRequest.newContext({ baseURL });
  for (const path of ["/api/v1/me", "/api/v1/users"]) {
    const res = await anon.get(path);
    expect(res.status()).toBe(401);
    expect((await res.json()).error.code).toBe("unauthenticated");
  }
  const tech = await apiAs(baseURL!, people.tech);
  const me = await tech.get("/api/v1/me");
  expect(me.status()).toBe(200);
  expect(await me.json()).toMatchObject({ email: people.tech, role: "technician", name: expect.any(String), id: expect.any(Number) });
  const techUsers = await tech.get("/api/v1/users");
  expect(techUsers.status()).toBe(403);
  expect((await techUsers.json()).error).toMatchObject({ code: "forbidden", message: expect.any(String) });

  const instructor = await apiAs(baseURL!, people.instructor);
  expect((await instructor.get("/api/v1/users")).status()).toBe(403);

  const manager = await apiAs(baseURL!, people.manager);
  const users = await manager.get("/api/v1/users");
  expect(users.status()).toBe(200);
  const list = await users.json();
  expect(list.map((u: { email: string }) => u.email)).toEqual(expect.arrayContaining(Object.values(people)));
  for (const ctx of [anon, tech, instructor, manager]) await ctx.dispose();
});

test("a POST from another origin is refused and changes nothing", async ({ baseURL }) => {
  const manager = await apiAs(baseURL!, people.manager);
  const res = await manager.post("/people", {
    form: { intent: "invite", name: "Cross Site", email: "cross@tankside.example", role: "technician" },
    headers: { Origin: "https://evil.example" },
  });
  expect(res.status()).toBe(403);
  const users = await (await manager.get("/api/v1/users")).json();
  expect(users.some((u: { email: string }) => u.email === "cross@tankside.example")).toBe(false);
  await manager.dispose();
});

test("forgotten password: the mail arrives, its link works once and only once", async ({ page, baseURL }) => {
  const since = await latestMailId(baseURL!);
  await page.goto("/forgot-password");
  await page.getByLabel("E-mail").fill("tech2@tankside.example");
  await page.getByRole("button", { name: "Send the reset link" }).click();
  await expect(page.getByText("Check your mail")).toBeVisible();
  const mail = await waitForMail(baseURL!, "tech2@tankside.example", "Reset your Tankside password", since);
  const link = linkIn(mail.text, "/reset-password/");

  await page.goto(link);
  await page.getByLabel("New password", { exact: true }).fill("a brand new password");
  await page.getByLabel("The same again").fill("a brand new password");
  await page.getByRole("button", { name: "Save the new password" }).click();
  await expect(page.getByRole("button", { name: "Sign out" })).toBeVisible();
  await page.getByRole("button", { name: "Sign out" }).click();
  // The sign-out has landed before the link is opened again: a navigation started earlier cancels it.
  await expect(page).toHaveURL(/\/sign-in$/);

  const again = await page.goto(link);
  expect(again?.status()).toBe(410);
  await expect(page.getByRole("heading", { name: "This link no longer works" })).toBeVisible();

  await signIn(page, "tech2@tankside.example", "a brand new password");
});

test("a deactivated person is signed out at once and cannot sign in again", async ({ browser, baseURL }) => {
  const techContext = await browser.newContext();
  const techPage = await techContext.newPage();
  await signIn(techPage, "instructor2@tankside.example");

  const managerContext = await browser.newContext();
  const managerPage = await managerContext.newPage();
  await signIn(managerPage, people.manager);
  await managerPage.goto("/people");
  const row = managerPage.getByTestId("person-instructor2@tankside.example");
  await row.getByRole("button", { name: "Deactivate" }).click();
  await expect(managerPage.getByText("Deactivated and signed out everywhere.")).toBeVisible();
  await expect(row.getByText("deactivated", { exact: true })).toBeVisible();

  await techPage.goto("/account");
  await expect(techPage).toHaveURL(/\/sign-in/);
  await techPage.getByLabel("E-mail").fill("instructor2@tankside.example");
  await techPage.getByLabel("Password").fill("tankside-demo");
  await techPage.getByRole("button", { name: "Sign in" }).click();
  await expect(techPage.getByRole("alert").first()).toHaveText("That e-mail and password do not match an active account.");

  await row.getByRole("button", { name: "Reactivate" }).click();
  await expect(managerPage.getByText("Reactivated.")).toBeVisible();
  await techContext.close();
  await managerContext.close();
  void baseURL;
});

test("an invitation e-mail leads to a working account", async ({ browser, baseURL }) => {
  const managerContext = await browser.newContext();
  const managerPage = await managerContext.newPage();
  await signIn(managerPage, people.manager);
  const since = await latestMailId(baseURL!);
  await managerPage.goto("/people");
  await managerPage.getByLabel("Name").fill("Nadia Brightwater");
  await managerPage.getByLabel("E-mail").fill("Nadia@Tankside.example");
  await managerPage.getByLabel("Role", { exact: true }).selectOption("instructor");
  await managerPage.getByRole("button", { name: "Send invitation", exact: true }).click();
  await expect(managerPage.getByText("Invitation sent to nadia@tankside.example.")).toBeVisible();

  const mail = await waitForMail(baseURL!, "nadia@tankside.example", "You are invited to Tankside", since);
  const link = linkIn(mail.text, "/welcome/");
  const guestContext = await browser.newContext();
  const guest = await guestContext.newPage();
  await guest.goto(link);
  await expect(guest.getByRole("heading", { name: "Welcome, Nadia Brightwater" })).toBeVisible();
  await guest.getByLabel("New password", { exact: true }).fill("rotating tanks are fun");
  await guest.getByLabel("The same again").fill("rotating tanks are fun");
  await guest.getByRole("button", { name: "Set my password and sign in" }).click();
  await expect(guest.getByRole("button", { name: "Sign out" })).toBeVisible();
  await expect(guest.getByRole("link", { name: "Nadia Brightwater Instructor" })).toBeVisible();
  await managerContext.close();
  await guestContext.close();
});

test("the last active lab manager cannot be demoted", async ({ page }) => {
  await signIn(page, people.manager);
  await page.goto("/people");
  const row = page.getByTestId(`person-${people.manager}`);
  await row.getByRole("combobox").selectOption("technician");
  await row.getByRole("button", { name: "Set" }).click();
  await expect(page.getByText("The lab needs at least one active lab manager")).toBeVisible();
  await expect(page.getByRole("button", { name: "Sign out" })).toBeVisible();
  await page.goto("/people");
  await expect(page.getByTestId(`person-${people.manager}`).getByRole("combobox")).toHaveValue("lab_manager");
});
