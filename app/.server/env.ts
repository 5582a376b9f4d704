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

export const env = {
  nodeEnv,
  isProduction,
  isTest: nodeEnv === "test" || Boolean(process.env.VITEST),
  demo,
  port,
  projectRoot,
  databaseUrl: process.env.DATABASE_URL ?? `sqlite:${path.join(projectRoot, "tankside.sqlite")}`,
  get sessionSecret() {
    return sessionSecret();
  },
  /** Cookies are marked Secure when COOKIE_SECURE=1 (behind HTTPS); plain HTTP on a bench PC otherwise. */
  cookieSecure: process.env.COOKIE_SECURE === "1",
  smtpUrl: process.env.SMTP_URL || null,
  mailFrom: process.env.MAIL_FROM ?? "Tankside <tankside@tankside.example>",
  appUrl: (process.env.APP_URL ?? `http://localhost:${port}`).replace(/\/$/, ""),
  uploadsDir: path.resolve(process.env.UPLOADS_DIR ?? path.join(projectRoot, "uploads")),
};
