import { describe, expect, it } from "vitest";
import { createMigrator } from "../migrate";
import { ApiToken, Session, sequelize } from "..";

describe("migration 0008 on a database already in use", () => {
  it("gives existing API tokens 90 days from the upgrade and existing sessions a last-seen time, readable by the models", async () => {
    const migrator = createMigrator();
    await migrator.up({ to: "0005-run-log-preferences" });
    // Rows as they were before 0008, written through the query interface so each database gets its own booleans and dates.
    const qi = sequelize.getQueryInterface();
    const then = new Date("2026-12-01T10:00:00.000Z");
    await qi.bulkInsert("users", [
      { id: 900, email: "old@tankside.example", name: "Old", role: "technician", password_hash: null, active: true, created_at: then, updated_at: then },
    ]);
    await qi.bulkInsert("api_tokens", [{ user_id: 900, label: "old script", token_hash: "hash", token_prefix: "tks_old", created_at: then, updated_at: then }]);
    await qi.bulkInsert("sessions", [
      { id: "old-session", user_id: 900, data: "{}", expires_at: new Date("2026-12-10T10:00:00.000Z"), created_at: then, updated_at: then },
    ]);

    const before = Date.now();
    await migrator.up();
    const token = (await ApiToken.findOne({ where: { label: "old script" } }))!;
    expect(Math.round((token.expiresAt.getTime() - before) / 86_400_000)).toBe(90);
    expect(token.revokedReason).toBeNull();
    const session = (await Session.findByPk("old-session"))!;
    expect(session.lastSeenAt!.getTime()).toBeGreaterThanOrEqual(before - 1000);
  });
});
