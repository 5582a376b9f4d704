import { data, redirect } from "react-router";
import { User } from "../db";
import { apiError, isApiRequest } from "../http";
import { getSession } from "./session";
import { userFromBearerToken } from "./api-tokens";
import type { Role } from "~/lib/roles";
import { capabilityRoles, roleCan, roleLabels, type Capability } from "~/lib/roles";

export interface CurrentUser {
  id: number;
  email: string;
  name: string;
  role: Role;
}

function toCurrent(user: User): CurrentUser {
  return { id: user.id, email: user.email, name: user.name, role: user.role };
}

/** Who is asking: a bearer token (API), else the session cookie. Inactive people count as nobody. */
export async function getCurrentUser(request: Request): Promise<CurrentUser | null> {
  const auth = request.headers.get("Authorization");
  if (auth) {
    if (!isApiRequest(request)) return null;
    const user = await userFromBearerToken(auth);
    if ("refused" in user) throw apiError(401, user.refused, user.message);
    return toCurrent(user);
  }
  const session = await getSession(request);
  const userId = session.get("userId");
  if (!userId) return null;
  const user = await User.findByPk(userId);
  return user && user.active ? toCurrent(user) : null;
}

const REDIRECT_BASE = "http://tankside.invalid";

/**
 * A path inside this app to go to after sign-in, else the fallback. The URL parser decides (as the
 * browser will): the value must resolve against a dummy origin to that same origin, and the path it
 * gives back must itself resolve there too — `/.//evil.example` resolves to the path
 * `//evil.example`, which a browser reads as another host.
 */
export function safeRedirectTo(value: FormDataEntryValue | string | null | undefined, fallback = "/"): string {
  if (typeof value !== "string" || !value || value.length > 2000) return fallback;
  // Browsers drop tabs and newlines inside URLs and read "\\" as "/": refuse them outright.
  // eslint-disable-next-line no-control-regex -- matching control characters is the point of this pattern
  if (!value.startsWith("/") || /[\u0000-\u0020\u007f\\]/.test(value)) return fallback;
  try {
    const url = new URL(value, REDIRECT_BASE);
    if (url.origin !== REDIRECT_BASE) return fallback;
    const path = url.pathname + url.search + url.hash;
    if (!path.startsWith("/") || path.startsWith("//") || path.startsWith("/\\")) return fallback;
    if (new URL(path, REDIRECT_BASE).origin !== REDIRECT_BASE) return fallback;
    if (url.pathname.startsWith("/sign-in") || url.pathname.startsWith("/sign-out")) return fallback;
    return path;
  } catch {
    return fallback;
  }
}

export async function requireUser(request: Request): Promise<CurrentUser> {
  const user = await getCurrentUser(request);
  if (user) return user;
  if (isApiRequest(request)) throw apiError(401, "unauthenticated", "Sign in first (or send an API token).");
  const url = new URL(request.url);
  const back = safeRedirectTo(url.pathname + url.search, "/");
  throw redirect(back === "/" ? "/sign-in" : `/sign-in?redirectTo=${encodeURIComponent(back)}`);
}

/**
 * Calibration records: who may change one and add files to it. Only the person who performed it
 * or a lab manager; another technician's unsigned record is theirs to finish, not to rewrite.
 */
export function canEditCalibration(user: Pick<CurrentUser, "id" | "role">, record: { performedById: number }): boolean {
  return user.role === "lab_manager" || (user.role === "technician" && record.performedById === user.id);
}

export function forbidden(request: Request, message: string): never {
  if (isApiRequest(request)) throw apiError(403, "forbidden", message);
  throw data(message, { status: 403 });
}

export async function requireRole(request: Request, ...allowed: Role[]): Promise<CurrentUser> {
  const user = await requireUser(request);
  if (!allowed.includes(user.role)) {
    forbidden(request, `This needs the role of ${allowed.map((r) => roleLabels[r].toLowerCase()).join(" or ")}.`);
  }
  return user;
}

/** May this person do this? One table (capabilityRoles in lib/roles.ts) for pages, API and navigation. */
export function can(user: Pick<CurrentUser, "role">, capability: Capability): boolean {
  return roleCan(user.role, capability);
}

/** requireRole by capability: the sign-in redirect or 401 for nobody, 403 for a role without it. */
export function requireCapability(request: Request, capability: Capability): Promise<CurrentUser> {
  return requireRole(request, ...capabilityRoles[capability]);
}
