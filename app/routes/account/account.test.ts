import { beforeAll, describe, expect, it } from "vitest";
import { ApiToken, User, migrate } from "~/.server/db";
import { hashPassword, verifyPassword } from "~/.server/auth/password";
import { sessionStorage } from "~/.server/auth/session";
import { action, headers, loader } from "./account";

const PASSWORD = "kettle ferry lantern quietly";

beforeAll(async () => {
  await migrate();
});

async function signedInPerson(name: string) {
  const stamp = Math.random().toString(36).slice(2, 8);
  const user = await User.create({
    email: `${name.toLowerCase()}-${stamp}@tankside.example`,
    name,
    role: "technician",
    passwordHash: await hashPassword(PASSWORD),
    passwordChangedAt: null,
  });
  const s = await sessionStorage.getSession();
  s.set("userId", user.id);
  const cookie = (await sessionStorage.commitSession(s)).split(";")[0] ?? "";
  return { user, cookie };
}

type Outcome = { status: number; headers: Headers; body: Record<string, unknown> };
/** Posts the account form as the browser would and unwraps React Router's data() result. */
async function post(cookie: string, fields: Record<string, string>): Promise<Outcome> {
  const request = new Request("http://localhost/account", { method: "POST", headers: { Cookie: cookie }, body: new URLSearchParams(fields) });
  const result = (await action({ request, params: {}, context: {} } as never)) as unknown;
  if (result && typeof result === "object" && "init" in result && "data" in result) {
    const { init, data } = result as { init: ResponseInit | null; data: Record<string, unknown> };
    return { status: init?.status ?? 200, headers: new Headers(init?.headers), body: data };
  }
  return { status: 200, headers: new Headers(), body: result as Record<string, unknown> };
}
const fieldErrors = (o: Outcome) => (o.body.result as { error?: Record<string, string[]> }).error ?? {};
const change = (current: string, password = "Moss grows on seven bridges") => ({ intent: "password", current, password, confirm: password });

describe("account page: the current-password check is throttled like sign-in (OWASP ASVS 4.0.3 V2.2.1)", () => {
  it("refuses the 6th try with 429 and Retry-After after 5 wrong current passwords, even the right one, and keeps the password", async () => {
    const { user, cookie } = await signedInPerson("Fay");
    for (let i = 0; i < 5; i++) {
      const wrong = await post(cookie, change(`guess number ${i} here`));
      expect(wrong.status).toBe(400);
      expect(fieldErrors(wrong).current).toEqual(["Your current password is not right."]);
    }
    const blocked = await post(cookie, change(PASSWORD));
    expect(blocked.status).toBe(429);
    const retryAfter = Number(blocked.headers.get("Retry-After"));
    expect(retryAfter).toBeGreaterThan(890);
    expect(retryAfter).toBeLessThanOrEqual(900);
    expect(fieldErrors(blocked).current).toEqual(["Too many failed attempts. Wait 15 minutes and try again."]);
    // The route keeps that header on the way out (React Router drops action headers other than cookies by default).
    expect(
      headers({ actionHeaders: blocked.headers, loaderHeaders: new Headers(), parentHeaders: new Headers(), errorHeaders: undefined }).get("Retry-After"),
    ).toBe(String(retryAfter));
    expect(await verifyPassword((await User.findByPk(user.id))!.passwordHash!, PASSWORD)).toBe(true);
  });

  it("lets the right password through after four wrong ones, and that success clears the count", async () => {
    const { cookie } = await signedInPerson("Gus");
    for (let i = 0; i < 4; i++) await post(cookie, change(`guess number ${i} here`));
    const ok = await post(cookie, change(PASSWORD, "Moss grows on seven bridges"));
    expect(ok.status).toBe(200);
    expect(ok.body.done).toMatch(/password is changed/);
    // Had the four stayed counted, the next wrong one would be the fifth and block.
    for (let i = 0; i < 4; i++) expect((await post(cookie, change(`guess again ${i} here`))).status).toBe(400);
    expect((await post(cookie, change("Moss grows on seven bridges", "orbital vortex dye 42"))).status).toBe(200);
  });
});

describe("account page: new password guessability is judged on the server (OWASP ASVS 4.0.3 V2.1.7)", () => {
  it("refuses a common password and one built on the person's name, saying why, and keeps the old password", async () => {
    const { user, cookie } = await signedInPerson("Hana");
    const common = await post(cookie, change(PASSWORD, "Password12345!"));
    expect(common.status).toBe(400);
    expect(fieldErrors(common).password?.[0]).toMatch(/too easy to guess.*commonly used password/);
    const own = await post(cookie, change(PASSWORD, `${user.email.split("@")[0]}-lab-2026`));
    expect(own.status).toBe(400);
    expect(fieldErrors(own).password?.[0]).toMatch(/your name, your e-mail address or the lab's name/);
    expect(await verifyPassword((await User.findByPk(user.id))!.passwordHash!, PASSWORD)).toBe(true);
  });
});

describe("account page: API tokens", () => {
  it("makes a token for the chosen number of days, refuses more than 365, and lists expiry and last use", async () => {
    const { user, cookie } = await signedInPerson("Ivo");
    const made = await post(cookie, { intent: "create-token", label: "nightly export", expiresInDays: "30" });
    expect(made.body.newToken).toMatch(/^tks_/);
    const row = (await ApiToken.findOne({ where: { userId: user.id } }))!;
    expect(Math.round((row.expiresAt.getTime() - row.createdAt.getTime()) / 86_400_000)).toBe(30);
    const tooLong = await post(cookie, { intent: "create-token", label: "forever", expiresInDays: "1000" });
    expect(tooLong.status).toBe(400);
    expect(tooLong.body.tokenError).toMatch(/at most 365 days/);

    const page = (await loader({ request: new Request("http://localhost/account", { headers: { Cookie: cookie } }), params: {}, context: {} } as never)) as {
      tokens: { label: string; expiresAt: string; lastUsedAt: string | null; expired: boolean }[];
    };
    expect(page.tokens).toHaveLength(1);
    expect(page.tokens[0]).toMatchObject({ label: "nightly export", expiresAt: row.expiresAt.toISOString(), lastUsedAt: null, expired: false });
  });
});
