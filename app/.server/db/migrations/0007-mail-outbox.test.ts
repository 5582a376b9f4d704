import { afterAll, describe, expect, it } from "vitest";
import { OutboxMail, migrate, sequelize } from "..";
import { createMigrator } from "../migrate";
import { enqueueMail } from "../../mail/outbox";

afterAll(async () => {
  await sequelize.close();
});

describe("migration 0007: the reminders' sent-once claims move into the outbox", () => {
  it("keeps a sent reminder's key, so it is never enqueued again, and drops unsent claims", async () => {
    await migrate();
    await createMigrator().down({ to: "0007-mail-outbox" });
    // Claims as the old reminder task left them, on records that exist (the foreign keys hold on either database).
    const qi = sequelize.getQueryInterface();
    const at = new Date("2026-11-01T08:00:00.000Z");
    await qi.bulkInsert("users", [
      { id: 900, email: "tech@tankside.example", name: "Tech", role: "technician", active: true, password_hash: null, created_at: at, updated_at: at },
    ]);
    await qi.bulkInsert("equipment", [{ id: 900, kind: "table", name: "Bench table", status: "in_service", created_at: at, updated_at: at }]);
    await qi.bulkInsert(
      "calibrations",
      [901, 902].map((id) => ({ id, kind: "rate", equipment_id: 900, performed_by_id: 900, performed_at: at, due_at: at, created_at: at, updated_at: at })),
    );
    await qi.bulkInsert("calibration_reminders", [
      { calibration_id: 901, state: "sent", claimed_at: at, sent_at: new Date("2026-11-01T08:00:01.000Z"), attempts: 1, last_error: null },
      { calibration_id: 902, state: "failed", claimed_at: at, sent_at: null, attempts: 2, last_error: "no recipients" },
    ]);
    await migrate();

    const carried = await OutboxMail.findAll({ where: { dedupeKey: ["calibration-reminder:901", "calibration-reminder:902"] } });
    expect(carried.map((r) => [r.dedupeKey, r.state])).toEqual([["calibration-reminder:901", "sent"]]);
    expect(carried[0]!.sentAt?.toISOString()).toBe("2026-11-01T08:00:01.000Z");
    const again = { to: "m@tankside.example", subject: "Calibration due", text: "x" };
    expect(await enqueueMail(again, { dedupeKey: "calibration-reminder:901" })).toBeNull();
    expect(await enqueueMail(again, { dedupeKey: "calibration-reminder:902" })).not.toBeNull();
  });
});
