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

/**
 * Whether this process takes background jobs (tracking, mail, calibration reminders). TANKSIDE_WORKERS=0
 * leaves them to `npm run worker` processes, which only PostgreSQL can share: with SQLite the web
 * process is the only one that can run them. Returns the reason the settings cannot work, or null.
 */
export function workersSetupProblem(vars: { TANKSIDE_WORKERS?: string; DATABASE_URL?: string }): string | null {
  const value = vars.TANKSIDE_WORKERS;
  if (value === undefined || value === "" || value === "1") return null;
  if (value !== "0")
    return `Tankside will not start: TANKSIDE_WORKERS must be 1 (this process runs background jobs, the default) or 0 (leave them to \`npm run worker\`), not "${value}".`;
  if (!/^postgres(ql)?:\/\//.test(vars.DATABASE_URL ?? "")) {
    return "Tankside will not start: TANKSIDE_WORKERS=0 needs PostgreSQL (DATABASE_URL=postgres://…); with SQLite the web process is the only one that can run tracking and mail, so leave TANKSIDE_WORKERS unset.";
  }
  return null;
}

/** How long a tracking job's claim lasts without a heartbeat (s); a worker killed mid-job is replaced after about this long. */
function jobLeaseSeconds(): number {
  const raw = process.env.TANKSIDE_JOB_LEASE_S;
  const value = raw ? Number(raw) : 30;
  if (!Number.isFinite(value) || value < 3 || value > 3600) throw new Error(`TANKSIDE_JOB_LEASE_S must be a number of seconds from 3 to 3600, not "${raw}".`);
  return value;
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
  /** This process takes background jobs unless TANKSIDE_WORKERS=0 (PostgreSQL only; see workersSetupProblem). */
  runsJobs: process.env.TANKSIDE_WORKERS !== "0",
  get jobLeaseSeconds() {
    return jobLeaseSeconds();
  },
  uploadsDir: path.resolve(process.env.UPLOADS_DIR ?? path.join(projectRoot, "uploads")),
};
