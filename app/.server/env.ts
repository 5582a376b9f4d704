import path from "node:path";
import crypto from "node:crypto";

/** Every setting Tankside reads from its environment, read once, with the defaults the README lists. */
const projectRoot = process.cwd();
const nodeEnv = process.env.NODE_ENV ?? "development";
const isProduction = nodeEnv === "production";
const demo = process.env.TANKSIDE_DEMO === "1";
const port = Number(process.env.PORT ?? 3000);

function sessionSecret(): string {
  const secret = process.env.SESSION_SECRET;
  if (secret && secret.length >= 16) return secret;
  if (secret) throw new Error("SESSION_SECRET must be at least 16 characters long.");
  if (isProduction) {
    throw new Error("SESSION_SECRET is required in production: set it to a long random string.");
  }
  // Development and tests only: a fresh secret per process is fine, sessions simply end on restart.
  return crypto.randomBytes(32).toString("hex");
}

/**
 * Why mail cannot be set up from these settings, or null. In production every message must go to
 * a real relay unless the built-in fake server (which shows every reset link on the mail page) is
 * asked for explicitly with TANKSIDE_FAKE_MAIL=1, as the demo and the browser tests do.
 */
export function mailSetupProblem(vars: { NODE_ENV?: string; SMTP_URL?: string; TANKSIDE_FAKE_MAIL?: string }): string | null {
  if (vars.SMTP_URL) return null;
  if (vars.NODE_ENV !== "production" || vars.TANKSIDE_FAKE_MAIL === "1") return null;
  return "Tankside will not start: SMTP_URL is not set in production. Set SMTP_URL to your mail relay, or set TANKSIDE_FAKE_MAIL=1 to use the built-in fake mail server on purpose (demo and tests only).";
}

function positiveInteger(name: string, fallback: number): number {
  const text = process.env[name];
  if (text === undefined || text === "") return fallback;
  if (!/^[1-9]\d{0,3}$/.test(text)) throw new Error(`${name} must be a whole number from 1 to 9999, not "${text}".`);
  return Number(text);
}

export const env = {
  nodeEnv,
  isProduction,
  isTest: nodeEnv === "test" || Boolean(process.env.VITEST),
  demo,
  port,
  projectRoot,
  databaseUrl: process.env.DATABASE_URL ?? `sqlite:${path.join(projectRoot, "tankside.sqlite")}`,
  /** PostgreSQL only: the most connections one process opens (each app process, script and migration has its own pool). */
  databasePoolMax: positiveInteger("DATABASE_POOL_MAX", 10),
  get sessionSecret() {
    return sessionSecret();
  },
  /** Cookies are marked Secure when COOKIE_SECURE=1 (behind HTTPS); plain HTTP on a bench PC otherwise. */
  cookieSecure: process.env.COOKIE_SECURE === "1",
  smtpUrl: process.env.SMTP_URL || null,
  /** TANKSIDE_FAKE_MAIL=1: the built-in fake SMTP server was asked for on purpose (required in production). */
  fakeMailRequested: process.env.TANKSIDE_FAKE_MAIL === "1",
  mailFrom: process.env.MAIL_FROM ?? "Tankside <tankside@tankside.example>",
  appUrl: (process.env.APP_URL ?? `http://localhost:${port}`).replace(/\/$/, ""),
  uploadsDir: path.resolve(process.env.UPLOADS_DIR ?? path.join(projectRoot, "uploads")),
};
