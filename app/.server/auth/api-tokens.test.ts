import { beforeAll, describe, expect, it } from "vitest";
import { ApiToken, CapturedMail, User, migrate } from "../db";
import { createApiToken, issueApiToken, LAST_USED_WRITE_MS, listApiTokens, revokeApiToken } from "./api-tokens";
import { getCurrentUser } from "./permissions";
import { apiTokenSchema } from "~/lib/validation/api-tokens";
import { OutboxSender } from "../mail/outbox-sender";

const DAY = 24 * 3600 * 1000;
let owner: User;

beforeAll(async () => {
  await migrate();
  owner = await User.create({
    email: `tokens-${Date.now()}@tankside.example`,
    name: "Token Owner",
    role: "technician",
    passwordHash: null,
    passwordChangedAt: null,
  });
});

/** What the API answers for this token: the user, or the thrown 401 as status and body. */
async function ask(token: string) {
  try {
    const user = await getCurrentUser(new Request("http://localhost/api/v1/me", { headers: { Authorization: `Bearer ${token}` } }));
    return { status: 200, user };
  } catch (thrown) {
    if (!(thrown instanceof Response)) throw thrown;
    return { status: thrown.status, body: (await thrown.json()) as { error: { code: string; message: string } } };
  }
}

describe("API token expiry (OWASP ASVS 4.0.3 V3.3.1)", () => {
  it("lasts 90 days unless chosen otherwise, at most 365", async () => {
    const before = Date.now();
    const { row } = await createApiToken(owner.id, "default");
    expect(Math.round((row.expiresAt.getTime() - before) / DAY)).toBe(90);
    expect(apiTokenSchema.parse({ label: "x", expiresInDays: "" }).expiresInDays).toBe(90);
    expect(apiTokenSchema.parse({ label: "x", expiresInDays: "30" }).expiresInDays).toBe(30);
    expect(apiTokenSchema.safeParse({ label: "x", expiresInDays: "366" }).error?.issues[0]?.message).toMatch(/at most 365 days/);
    expect(apiTokenSchema.safeParse({ label: "x", expiresInDays: "0" }).success).toBe(false);
    expect(apiTokenSchema.safeParse({ label: "x", expiresInDays: "2.5" }).success).toBe(false);
    await expect(createApiToken(owner.id, "too long", 400)).rejects.toThrow(/1 to 365 days/);
  });

  it("answers 401 token_expired once the expiry has passed, and works until then", async () => {
    const { token, row } = await createApiToken(owner.id, "short", 1);
    expect((await ask(token)).status).toBe(200);
    await row.update({ expiresAt: new Date(Date.now() - 1000) });
    const answer = await ask(token);
    expect(answer.status).toBe(401);
    expect(answer.body?.error.code).toBe("token_expired");
    expect(answer.body?.error.message).toMatch(/expired on .*Make a new one on your account page/);
  });

  it("tells a revoked token from an unknown one: token_revoked versus invalid_token", async () => {
    const { token, row } = await createApiToken(owner.id, "to revoke");
    expect(await revokeApiToken(owner.id, row.id)).toBe(true);
    expect((await ask(token)).body?.error).toMatchObject({ code: "token_revoked", message: expect.stringMatching(/its owner revoked it/) });
    expect((await ask("tks_" + "x".repeat(40))).body?.error.code).toBe("invalid_token");
    expect((await ask("not-even-ours")).body?.error.code).toBe("invalid_token");
  });
});

describe("API token last use", () => {
  it("is recorded on first use and then at most once a minute", async () => {
    const { token, row } = await createApiToken(owner.id, "busy script");
    expect(row.lastUsedAt).toBeNull();
    await ask(token);
    const first = (await ApiToken.findByPk(row.id))!.lastUsedAt!;
    expect(first).not.toBeNull();
    await ask(token);
    await ask(token);
    expect((await ApiToken.findByPk(row.id))!.lastUsedAt!.getTime()).toBe(first.getTime());

    await ApiToken.update({ lastUsedAt: new Date(Date.now() - LAST_USED_WRITE_MS - 1000) }, { where: { id: row.id } });
    const before = Date.now();
    await ask(token);
    expect((await ApiToken.findByPk(row.id))!.lastUsedAt!.getTime()).toBeGreaterThanOrEqual(before);
    expect((await listApiTokens(owner.id)).find((t) => t.id === row.id)!.lastUsedAt!.getTime()).toBeGreaterThanOrEqual(before);
  });
});

describe("a new API token is announced by e-mail (OWASP ASVS 4.0.3 V2.2.3)", () => {
  it("mails the owner the token's name and end date, never the token itself", async () => {
    const { token, mail } = await issueApiToken(owner, { label: "term export script", expiresInDays: 30 });
    expect(mail).toEqual({ queued: true, id: expect.any(Number) });
    await new OutboxSender().drain();
    const got = await CapturedMail.findOne({ where: { subject: "A new Tankside API token was made", envelopeTo: owner.email }, order: [["id", "DESC"]] });
    expect(got).not.toBeNull();
    expect(got!.textBody).toContain('"term export script"');
    expect(got!.textBody).toMatch(/works until \d{1,2} \w{3} \d{4}/);
    expect(got!.textBody).toContain("/account");
    expect(got!.textBody).not.toContain(token);
  });
});
