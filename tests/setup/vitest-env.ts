// Each test file gets its own database file, set before the db module is first imported.
import os from "node:os";
import path from "node:path";
import crypto from "node:crypto";

process.env.DATABASE_URL = `sqlite:${path.join(os.tmpdir(), `tankside-vitest-${process.pid}-${crypto.randomUUID()}.sqlite`)}`;
process.env.SESSION_SECRET ??= "vitest-session-secret-not-for-production";
process.env.UPLOADS_DIR = path.join(os.tmpdir(), `tankside-vitest-uploads-${process.pid}`);
delete process.env.SMTP_URL;
