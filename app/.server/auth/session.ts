import crypto from "node:crypto";
import { createCookie, createSessionStorage, redirect, type Cookie } from "react-router";
import { Op } from "sequelize";
import { Session } from "../db";
import { getLabSettings } from "../settings";
import { env } from "../env";
import { SESSION_ABSOLUTE_HOURS } from "~/lib/settings";

const HOUR_MS = 3600 * 1000;
/** Last-seen is written at most this often: a page with many requests does not write on each one. */
export const LAST_SEEN_WRITE_MS = 60_000;

/**
 * The session cookie. Behind HTTPS (COOKIE_SECURE=1) it carries the `__Host-` prefix, which tells
 * the browser to accept it only with Secure, Path=/ and no Domain, so no sibling host can plant or
 * overwrite it (OWASP ASVS 4.0.3 V3.4.1, V3.4.4; RFC 6265bis §4.1.3.2). HttpOnly and SameSite=Lax
 * cover V3.4.2 and V3.4.3. Plain HTTP on a bench PC cannot use the prefix.
 */
export function makeSessionCookie(secure: boolean, secret = env.sessionSecret): Cookie {
  return createCookie(secure ? "__Host-tankside_session" : "tankside_session", {
    httpOnly: true,
    sameSite: "lax",
    path: "/",
    secure,
    secrets: [secret],
    maxAge: SESSION_ABSOLUTE_HOURS * 3600,
  });
}

export const sessionCookie = makeSessionCookie(env.cookieSecure);

export interface SessionData {
  userId: number;
}
export interface FlashData {
  notice: string;
}

/** The lab's idle timeout in milliseconds, read on each request so a change applies at once. */
async function idleTimeoutMs(): Promise<number> {
  return (await getLabSettings()).sessionIdleHours * HOUR_MS;
}

/**
 * Why a stored session may no longer be used, or null. Both limits are checked here on every
 * request, on the server, whatever the cookie says (OWASP ASVS 4.0.3 V3.3.2).
 */
export function sessionEnded(row: Pick<Session, "createdAt" | "expiresAt" | "lastSeenAt" | "updatedAt">, idleMs: number, now = Date.now()) {
  if (row.expiresAt.getTime() <= now) return "expired";
  if (row.createdAt.getTime() + SESSION_ABSOLUTE_HOURS * HOUR_MS <= now) return "expired";
  if ((row.lastSeenAt ?? row.updatedAt).getTime() + idleMs <= now) return "idle";
  return null;
}

/** Sessions live in the database, so signing out or deactivating a person ends them at once. */
export function storageWith(cookie: Cookie) {
  return createSessionStorage<SessionData, FlashData>({
    cookie,
    async createData(data) {
      const id = crypto.randomBytes(32).toString("hex");
      const now = new Date();
      await Session.create({
        id,
        userId: data.userId ?? null,
        data: JSON.stringify(data),
        // The absolute lifetime counts from sign-in; later commits never extend it.
        expiresAt: new Date(now.getTime() + SESSION_ABSOLUTE_HOURS * HOUR_MS),
        lastSeenAt: now,
        createdAt: now,
      });
      return id;
    },
    async readData(id) {
      const row = await Session.findByPk(id);
      if (!row) return null;
      const now = Date.now();
      if (sessionEnded(row, await idleTimeoutMs(), now)) {
        await row.destroy();
        return null;
      }
      if (!row.lastSeenAt || now - row.lastSeenAt.getTime() >= LAST_SEEN_WRITE_MS) {
        await Session.update({ lastSeenAt: new Date(now) }, { where: { id } });
      }
      return JSON.parse(row.data) as SessionData;
    },
    async updateData(id, data) {
      await Session.update({ data: JSON.stringify(data), userId: data.userId ?? null, lastSeenAt: new Date() }, { where: { id } });
    },
    async deleteData(id) {
      await Session.destroy({ where: { id } });
    },
  });
}

export const sessionStorage = storageWith(sessionCookie);

export function getSession(request: Request) {
  return sessionStorage.getSession(request.headers.get("Cookie"));
}

export async function startSession(request: Request, userId: number, redirectTo: string) {
  const session = await getSession(request);
  // A fresh session id at sign-in: an id planted before sign-in is never promoted.
  if (session.id) await sessionStorage.destroySession(session);
  const fresh = await sessionStorage.getSession();
  fresh.set("userId", userId);
  return redirect(redirectTo, { headers: { "Set-Cookie": await sessionStorage.commitSession(fresh) } });
}

export async function endSession(request: Request, redirectTo = "/sign-in") {
  const session = await getSession(request);
  return redirect(redirectTo, { headers: { "Set-Cookie": await sessionStorage.destroySession(session) } });
}

export async function endAllSessionsOf(userId: number, exceptSessionId?: string) {
  await Session.destroy({
    where: exceptSessionId ? { userId, id: { [Op.ne]: exceptSessionId } } : { userId },
  });
}

/** Removes sessions past their absolute lifetime or idle for longer than the lab's timeout. */
export async function purgeExpiredSessions() {
  const idleSince = new Date(Date.now() - (await idleTimeoutMs()));
  await Session.destroy({ where: { [Op.or]: [{ expiresAt: { [Op.lt]: new Date() } }, { lastSeenAt: { [Op.lt]: idleSince } }] } });
}
