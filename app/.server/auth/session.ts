import crypto from "node:crypto";
import { createCookie, createSessionStorage, redirect } from "react-router";
import { Op } from "sequelize";
import { Session } from "../db";
import { env } from "../env";

const SESSION_DAYS = 14;

export const sessionCookie = createCookie("tankside_session", {
  httpOnly: true,
  sameSite: "lax",
  path: "/",
  secure: env.cookieSecure,
  secrets: [env.sessionSecret],
  maxAge: SESSION_DAYS * 24 * 3600,
});

export interface SessionData {
  userId: number;
}
export interface FlashData {
  notice: string;
}

/** Sessions live in the database, so signing out or deactivating a person ends them at once. */
export const sessionStorage = createSessionStorage<SessionData, FlashData>({
  cookie: sessionCookie,
  async createData(data, expires) {
    const id = crypto.randomBytes(32).toString("hex");
    await Session.create({
      id,
      userId: data.userId ?? null,
      data: JSON.stringify(data),
      expiresAt: expires ?? new Date(Date.now() + SESSION_DAYS * 24 * 3600 * 1000),
    });
    return id;
  },
  async readData(id) {
    const row = await Session.findByPk(id);
    if (!row) return null;
    if (row.expiresAt.getTime() < Date.now()) {
      await row.destroy();
      return null;
    }
    return JSON.parse(row.data);
  },
  async updateData(id, data, expires) {
    await Session.update(
      {
        data: JSON.stringify(data),
        userId: data.userId ?? null,
        expiresAt: expires ?? new Date(Date.now() + SESSION_DAYS * 24 * 3600 * 1000),
      },
      { where: { id } },
    );
  },
  async deleteData(id) {
    await Session.destroy({ where: { id } });
  },
});

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

export async function purgeExpiredSessions() {
  await Session.destroy({ where: { expiresAt: { [Op.lt]: new Date() } } });
}
