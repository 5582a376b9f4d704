import { beforeAll, describe, expect, it } from "vitest";
import { AuthToken, User, migrate } from "~/.server/db";
import { findUsableToken } from "~/.server/people";
import { hashToken, newSecretToken } from "~/.server/auth/tokens";
import { action } from "./reset-password";

beforeAll(async () => {
  await migrate();
});

async function resetLink() {
  const stamp = Math.random().toString(36).slice(2, 8);
  const user = await User.create({
    email: `kai.moreno-${stamp}@tankside.example`,
    name: "Kai Moreno",
    role: "technician",
    passwordHash: null,
    passwordChangedAt: null,
  });
  const token = newSecretToken();
  await AuthToken.create({
    userId: user.id,
    purpose: "password_reset",
    tokenHash: hashToken(token),
    expiresAt: new Date(Date.now() + 3600_000),
    usedAt: null,
    createdById: null,
  });
  return { user, token };
}
async function choose(token: string, password: string) {
  const request = new Request(`http://localhost/reset-password/${token}`, { method: "POST", body: new URLSearchParams({ password, confirm: password }) });
  return (await action({ request, params: { token }, context: {} } as never)) as unknown;
}

describe("reset link: guessability is judged before the link is spent (OWASP ASVS 4.0.3 V2.1.7)", () => {
  it("refuses a password built on the person's name with a reason, and the link still works for a good one", async () => {
    const { token } = await resetLink();
    const refused = (await choose(token, "KaiMoreno2026!")) as { init: ResponseInit; data: { error: Record<string, string[]> } };
    expect(refused.init.status).toBe(400);
    expect(refused.data.error.password?.[0]).toMatch(/your name, your e-mail address or the lab's name/);
    expect(await findUsableToken(token, "password_reset")).not.toBeNull();
    // The same characters are fine for someone else: it is the name that makes them guessable.
    const other = await resetLink();
    await other.user.update({ name: "Ravi Kumar", email: `ravi-${other.user.id}@tankside.example` });
    expect(await choose(other.token, "KaiMoreno2026!")).toBeInstanceOf(Response);

    const accepted = await choose(token, "kettle ferry lantern quietly");
    expect(accepted).toBeInstanceOf(Response);
    expect((accepted as Response).status).toBe(302);
    expect(await findUsableToken(token, "password_reset")).toBeNull();
  });
});
