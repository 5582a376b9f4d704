import { describe, expect, it } from "vitest";
import { createMigrator } from "../migrate";
import { ApiToken, Session, sequelize } from "..";

describe("migration 0008 on a database already in use", () => {
  it("gives existing API tokens 90 days from the upgrade and existing sessions a last-seen time, readable by the models", async () => {
    const migrator = createMigrator();
    await migrator.up({ to: "0005-run-log-preferences" });
    const then = "2026-12-01 10:00:00.000 +00:00";
    await sequelize.query(`INSERT INTO users (email, name, role, password_hash, active, created_at, updated_at) VALUES ('old@tankside.example', 'Old', 'technician', NULL, 1, '${then}', '${then}')`);
    await sequelize.query(`INSERT INTO api_tokens (user_id, label, token_hash, token_prefix, created_at, updated_at) VALUES (1, 'old script', 'hash', 'tks_old', '${then}', '${then}')`);
    await sequelize.query(`INSERT INTO sessions (id, user_id, data, expires_at, created_at, updated_at) VALUES ('old-session', 1, '{}', '2026-12-10 10:00:00.000 +00:00', '${then}', '${then}')`);

    const before = Date.now();
    await migrator.up();
    const token = (await ApiToken.findOne({ where: { label: "old script" } }))!;
    expect(Math.round((token.expiresAt.getTime() - before) / 86_400_000)).toBe(90);
    expect(token.revokedReason).toBeNull();
    const session = (await Session.findByPk("old-session"))!;
    expect(session.lastSeenAt!.getTime()).toBeGreaterThanOrEqual(before - 1000);
  });
});
