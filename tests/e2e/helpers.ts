import { expect, request as playwrightRequest, type Page, type APIRequestContext } from "@playwright/test";

export const DEMO_PASSWORD = "tankside-demo";
export const people = {
  manager: "manager@tankside.example",
  tech: "tech@tankside.example",
  instructor: "instructor@tankside.example",
} as const;

/**
 * On a new run's page: leaves the camera's last view setup, when it is offered, not carried over,
 * for a test that sets the view up on the run's own frames. It waits for the run page itself first:
 * the address changes before the new page is drawn, so a look straight after it can miss the offer.
 */
export async function declineCarryOver(page: Page) {
  await expect(page.getByLabel("Choose frames, a ZIP or a video")).toBeAttached();
  const carry = page.getByRole("checkbox", { name: /Carry over the view setup/ });
  if ((await carry.count()) > 0) {
    await carry.uncheck();
    await expect(carry).not.toBeChecked();
  }
}

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await expect(page.getByRole("button", { name: "Sign out" })).toBeVisible();
}

/** An API client signed in with a session cookie, as a script or fetcher would be. */
export async function apiAs(baseURL: string, email: string, password = DEMO_PASSWORD): Promise<APIRequestContext> {
  const ctx = await playwrightRequest.newContext({ baseURL });
  const res = await ctx.post("/sign-in", { form: { email, password }, maxRedirects: 0 });
  expect(res.status(), `sign-in as ${email}`).toBe(302);
  return ctx;
}

/**
 * Logs a run through the new-run form (as the page posts it) on the demo lab's first in-service
 * table, tank and camera: a float at 10 cm and 20 °C, a co-rotating camera at 30 frames/s, turning
 * counterclockwise; `setRateRpm` and `purpose` say what the test is about. Returns the run's id.
 */
export async function logRunThroughForm(api: APIRequestContext, fields: { setRateRpm: string; purpose: string }): Promise<number> {
  const equipment = (await (await api.get("/api/v1/equipment")).json()) as { id: number; kind: string; status: string }[];
  const pick = (kind: string) => equipment.find((e) => e.kind === kind && e.status === "in_service")!.id;
  const created = await api.post("/runs/new", {
    form: {
      tableId: String(pick("table")),
      tankId: String(pick("tank")),
      cameraId: String(pick("camera")),
      direction: "ccw",
      waterDepthCm: "10",
      waterTemperatureC: "20",
      cameraMode: "rotating",
      frameRateFps: "30",
      tracer: "float",
      ...fields,
    },
    maxRedirects: 0,
  });
  expect(created.status()).toBe(302);
  return Number(created.headers()["location"]!.split("/").pop());
}

export interface CapturedMessage {
  id: number;
  to: string[];
  subject: string;
  text: string;
}

/** Waits for a message to arrive at the fake SMTP server (read through the lab manager's mail API). */
export async function waitForMail(baseURL: string, to: string, subjectIncludes: string, after = 0): Promise<CapturedMessage> {
  const manager = await apiAs(baseURL, people.manager);
  try {
    let found: CapturedMessage | undefined;
    await expect
      .poll(
        async () => {
          const res = await manager.get(`/api/v1/mail?to=${encodeURIComponent(to)}`);
          const list = (await res.json()) as CapturedMessage[];
          found = list.find((m) => m.id > after && m.subject.includes(subjectIncludes));
          return Boolean(found);
        },
        { timeout: 15_000 },
      )
      .toBe(true);
    return found!;
  } finally {
    await manager.dispose();
  }
}

export async function latestMailId(baseURL: string): Promise<number> {
  const manager = await apiAs(baseURL, people.manager);
  const list = (await (await manager.get("/api/v1/mail")).json()) as CapturedMessage[];
  await manager.dispose();
  return list[0]?.id ?? 0;
}

export function linkIn(text: string, pathPrefix: string): string {
  const match = new RegExp(`https?://[^\\s]+${pathPrefix.replace(/\//g, "\\/")}[^\\s]+`).exec(text);
  if (!match) throw new Error(`no ${pathPrefix} link in: ${text}`);
  return new URL(match[0]).pathname;
}
