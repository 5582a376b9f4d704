import { beforeAll, describe, expect, it } from "vitest";
import { ApiToken, AuthToken, CapturedMail, Session, User, migrate } from "../db";
import { changeOwnPassword, setActive, setPasswordWithToken } from "../people";
import { createApiToken, userFromBearerToken } from "./api-tokens";
import { hashPassword } from "./password";
import { hashToken, newSecretToken } from "./tokens";
import { sessionStorage } from "./session";
import { OutboxSender } from "../mail/outbox-sender";

const OLD = "kettle ferry lantern quietly";
const NEW = "Moss grows on seven bridges";

beforeAll(async () => {
  await migrate();
});

async function person(name: string) {
  const stamp = Math.random().toString(36).slice(2, 8);
  return User.create({
    email: `${name.toLowerCase()}-${stamp}@tankside.example`,
    name,
    role: "technician",
    passwordHash: await hashPassword(OLD),
    passwordChangedAt: null,
  });
}
async function sessionOf(userId: number) {
  const s = await sessionStorage.getSession();
  s.set("userId", userId);
  await sessionStorage.commitSession(s);
  return (await Session.findOne({
    where: { userId },
    order: [
      ["createdAt", "DESC"],
      ["id", "DESC"],
    ],
  }))!.id;
}
async function linkFor(userId: number, purpose: "password_reset" | "invitation") {
  const token = newSecretToken();
  await AuthToken.create({ userId, purpose, tokenHash: hashToken(token), expiresAt: new Date(Date.now() + 3600_000), usedAt: null, createdById: null });
  return token;
}
/** What reached the inbox once the outbox has been delivered, as the server's sender does after each commit. */
async function mailsTo(email: string, subject: string) {
  await new OutboxSender().drain();
  return CapturedMail.findAll({ where: { envelopeTo: email, subject } });
}

describe("a password change ends the other ways in and tells the person (OWASP ASVS 4.0.3 V3.3.3, V2.2.3)", () => {
  it("own change on the account page: other sessions end, this one stays, every API token is revoked, a notice is mailed", async () => {
    const u = await person("Ana");
    const here = await sessionOf(u.id);
    const elsewhere = await sessionOf(u.id);
    const { token } = await createApiToken(u.id, "script");
    await changeOwnPassword(u.id, OLD, NEW, here);

    expect(await Session.findByPk(here)).not.toBeNull();
    expect(await Session.findByPk(elsewhere)).toBeNull();
    expect(await userFromBearerToken(`Bearer ${token}`)).toMatchObject({ refused: "token_revoked", message: expect.stringMatching(/password was changed/) });
    expect((await ApiToken.findAll({ where: { userId: u.id } })).map((t) => t.revokedReason)).toEqual(["password_changed"]);
    const notices = await mailsTo(u.email, "Your Tankside password was changed");
    expect(notices).toHaveLength(1);
    expect(notices[0]!.textBody).toContain("changed from your account page");
    expect(notices[0]!.textBody).toContain("/forgot-password");
  });

  it("a reset link: sessions and API tokens end and the notice names the reset", async () => {
    const u = await person("Ben");
    await sessionOf(u.id);
    const { token } = await createApiToken(u.id, "script");
    await setPasswordWithToken(await linkFor(u.id, "password_reset"), "password_reset", NEW);
    expect(await Session.count({ where: { userId: u.id } })).toBe(0);
    expect(await userFromBearerToken(`Bearer ${token}`)).toMatchObject({ refused: "token_revoked" });
    const notices = await mailsTo(u.email, "Your Tankside password was changed");
    expect(notices).toHaveLength(1);
    expect(notices[0]!.textBody).toContain("through a reset link");
  });

  it("a first password from an invitation sends no change notice", async () => {
    const u = await person("Cleo");
    await u.update({ passwordHash: null });
    await setPasswordWithToken(await linkFor(u.id, "invitation"), "invitation", NEW);
    expect(await mailsTo(u.email, "Your Tankside password was changed")).toHaveLength(0);
  });

  it("a wrong current password changes nothing: tokens keep working", async () => {
    const u = await person("Dev");
    const { token } = await createApiToken(u.id, "script");
    await expect(changeOwnPassword(u.id, "not my password at all", NEW)).rejects.toMatchObject({ field: "current" });
    expect(await userFromBearerToken(`Bearer ${token}`)).toMatchObject({ id: u.id });
  });
});

describe("deactivation ends every way in (OWASP ASVS 4.0.3 V3.3.1)", () => {
  it("revokes the person's API tokens with the reason, and ends their sessions", async () => {
    const u = await person("Eve");
    await sessionOf(u.id);
    const { token } = await createApiToken(u.id, "script");
    await setActive(u.id, false);
    expect(await Session.count({ where: { userId: u.id } })).toBe(0);
    expect(await userFromBearerToken(`Bearer ${token}`)).toMatchObject({ refused: "token_revoked", message: expect.stringMatching(/deactivated/) });
    // Reactivating does not bring old tokens back.
    await setActive(u.id, true);
    expect(await userFromBearerToken(`Bearer ${token}`)).toMatchObject({ refused: "token_revoked" });
  });
});
