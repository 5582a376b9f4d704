// Each test file gets its own database, set before the db module is first imported: a fresh SQLite
// file, or with TEST_DATABASE_URL=postgres://… a fresh database created on that PostgreSQL server.
import os from "node:os";
import path from "node:path";
import crypto from "node:crypto";
import pg from "pg";

const testDatabaseUrl = process.env.TEST_DATABASE_URL;
if (testDatabaseUrl && /^postgres(ql)?:\/\//.test(testDatabaseUrl)) {
  const name = `tankside_t_${crypto.randomUUID().replace(/-/g, "").slice(0, 16)}`;
  const admin = new pg.Client({ connectionString: testDatabaseUrl });
  await admin.connect();
  try {
    await admin.query(`CREATE DATABASE ${name}`);
  } finally {
    await admin.end();
  }
  const url = new URL(testDatabaseUrl);
  url.pathname = `/${name}`;
  process.env.DATABASE_URL = url.toString();
} else {
  process.env.DATABASE_URL = `sqlite:${path.join(os.tmpdir(), `tankside-vitest-${process.pid}-${crypto.randomUUID()}.sqlite`)}`;
}
process.env.SESSION_SECRET ??= "vitest-session-secret-not-for-production";
// Each test file its own uploads folder too. One named by the process id alone was met again by a
// later run whose worker got the same id, with that run's files in it, hours old: the orphan sweep's
// test then found them and counted them as its own.
process.env.UPLOADS_DIR = path.join(os.tmpdir(), `tankside-vitest-uploads-${process.pid}-${crypto.randomUUID()}`);
delete process.env.SMTP_URL;
