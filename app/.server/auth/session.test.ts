import { beforeAll, beforeEach, describe, expect, it } from "vitest";
import { LabSetting, Session, User, migrate } from "../db";
import { setLabSetting } from "../settings";
import { LAST_SEEN_WRITE_MS, getSession, makeSessionCookie, sessionCookie, sessionStorage, storageWith } from "./session";
import { SESSION_ABSOLUTE_HOURS, settingDefaults } from "~/lib/settings";

const HOUR = 3600 * 1000;
let userId: number;

beforeAll(async () => {
  await migrate();
  userId = (
    await User.create({
      email: `sessions-${Date.now()}@tankside.example`,
      name: "Session Tester",
      role: "technician",
      passwordHash: null,
      passwordChangedAt: null,
    })
  ).id;
});

beforeEach(async () => {
  await LabSetting.destroy({ where: { key: "sessionIdleHours" } });
});

/** Signs in as the test user and returns the Cookie header a browser would send back, and the row's id. */
async function signedIn() {
  const session = await sessionStorage.getSession();
  session.set("userId", userId);
  const setCookie = await sessionStorage.commitSession(session);
  const cookie = setCookie.split(";")[0] ?? "";
  const id = (await Session.findOne({ where: { userId }, order: [["createdAt", "DESC"]] }))!.id;
  return { cookie, id };
}
const request = (cookie: string) => new Request("http://localhost/runs", { headers: { Cookie: cookie } });
const lastSeen = (id: string, msAgo: number) => Session.update({ lastSeenAt: new Date(Date.now() - msAgo) }, { where: { id } });

describe("session idle timeout and absolute lifetime (OWASP ASVS 4.0.3 V3.3.2)", () => {
  it("defaults to 8 hours idle and 12 hours absolute", () => {
    expect(settingDefaults.sessionIdleHours).toBe(8);
    expect(SESSION_ABSOLUTE_HOURS).toBe(12);
  });

  it("keeps a session used 7 h 59 min ago and ends one idle for 8 h, deleting its row", async () => {
    const kept = await signedIn();
    await lastSeen(kept.id, 8 * HOUR - 60_000);
    expect((await getSession(request(kept.cookie))).get("userId")).toBe(userId);

    const idle = await signedIn();
    await lastSeen(idle.id, 8 * HOUR + 1000);
    expect((await getSession(request(idle.cookie))).get("userId")).toBeUndefined();
    expect(await Session.findByPk(idle.id)).toBeNull();
  });

  it("applies the lab's idle setting on the next request", async () => {
    const s = await signedIn();
    await lastSeen(s.id, 2 * HOUR);
    expect((await getSession(request(s.cookie))).get("userId")).toBe(userId);
    await lastSeen(s.id, 2 * HOUR);
    await setLabSetting("sessionIdleHours", 1);
    expect((await getSession(request(s.cookie))).get("userId")).toBeUndefined();
  });

  it("ends a session 12 hours after sign-in even when it was used a minute ago, and later commits do not extend it", async () => {
    const s = await signedIn();
    const row = (await Session.findByPk(s.id))!;
    expect(row.expiresAt.getTime() - row.createdAt.getTime()).toBe(12 * HOUR);
    // A later commit (a flash message, say) must not move the end.
    const session = await getSession(request(s.cookie));
    session.flash("notice", "saved");
    await sessionStorage.commitSession(session);
    expect((await Session.findByPk(s.id))!.expiresAt.getTime()).toBe(row.expiresAt.getTime());

    await Session.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { id: s.id } });
    await lastSeen(s.id, 60_000);
    expect((await getSession(request(s.cookie))).get("userId")).toBeUndefined();
    expect(await Session.findByPk(s.id)).toBeNull();
  });

  it("records last-seen at most once a minute, not on every request", async () => {
    const s = await signedIn();
    const recent = new Date(Date.now() - 10_000);
    await Session.update({ lastSeenAt: recent }, { where: { id: s.id } });
    await getSession(request(s.cookie));
    expect((await Session.findByPk(s.id))!.lastSeenAt!.getTime()).toBe(recent.getTime());

    await lastSeen(s.id, LAST_SEEN_WRITE_MS + 1000);
    const before = Date.now();
    await getSession(request(s.cookie));
    expect((await Session.findByPk(s.id))!.lastSeenAt!.getTime()).toBeGreaterThanOrEqual(before);
  });
});

/** Splits a Set-Cookie header into its name, value and attributes, as a browser reads it. */
function readSetCookie(header: string) {
  const [pair = "", ...attrs] = header.split(";").map((p) => p.trim());
  const eq = pair.indexOf("=");
  const attributes = new Map(
    attrs.map((a) => {
      const i = a.indexOf("=");
      return i < 0 ? [a.toLowerCase(), ""] : [a.slice(0, i).toLowerCase(), a.slice(i + 1)];
    }),
  );
  return { name: pair.slice(0, eq), value: pair.slice(eq + 1), attributes };
}

describe("session cookie attributes (OWASP ASVS 4.0.3 V3.4.1–V3.4.4, RFC 6265bis __Host- prefix)", () => {
  it("behind HTTPS: __Host- name, Secure, Path=/, no Domain, HttpOnly, SameSite=Lax, and it reads back", async () => {
    const secure = storageWith(makeSessionCookie(true));
    const session = await secure.getSession();
    session.set("userId", userId);
    const header = await secure.commitSession(session);
    const { name, value, attributes } = readSetCookie(header);
    expect(name).toBe("__Host-tankside_session");
    expect(attributes.has("secure")).toBe(true);
    expect(attributes.get("path")).toBe("/");
    expect(attributes.has("domain")).toBe(false);
    expect(attributes.has("httponly")).toBe(true);
    expect(attributes.get("samesite")?.toLowerCase()).toBe("lax");
    expect(Number(attributes.get("max-age"))).toBe(12 * 3600);
    // The browser sends it back under the prefixed name; the server finds the session by it.
    const back = await secure.getSession(`${name}=${value}`);
    expect(back.get("userId")).toBe(userId);
    // A cookie under the unprefixed name (as a sibling host could set) is not read.
    expect((await secure.getSession(`tankside_session=${value}`)).get("userId")).toBeUndefined();
  });

  it("on plain HTTP (COOKIE_SECURE unset, as in these tests): no prefix, no Secure, still HttpOnly", async () => {
    expect(sessionCookie.name).toBe("tankside_session");
    const session = await sessionStorage.getSession();
    session.set("userId", userId);
    const { name, attributes } = readSetCookie(await sessionStorage.commitSession(session));
    expect(name).toBe("tankside_session");
    expect(attributes.has("secure")).toBe(false);
    expect(attributes.has("httponly")).toBe(true);
    expect(attributes.get("path")).toBe("/");
  });
});
