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
    // Claims as the old reminder task left them; the records they point at do not matter here.
    await sequelize.query("PRAGMA foreign_keys=OFF");
    await sequelize.query(
      `INSERT INTO calibration_reminders (calibration_id, state, claimed_at, sent_at, attempts, last_error) VALUES
       (901, 'sent', '2026-11-01 08:00:00.000 +00:00', '2026-11-01 08:00:01.000 +00:00', 1, NULL),
       (902, 'failed', '2026-11-01 08:00:00.000 +00:00', NULL, 2, 'no recipients')`,
    );
    await sequelize.query("PRAGMA foreign_keys=ON");
    await migrate();

    const carried = await OutboxMail.findAll({ where: { dedupeKey: ["calibration-reminder:901", "calibration-reminder:902"] } });
    expect(carried.map((r) => [r.dedupeKey, r.state])).toEqual([["calibration-reminder:901", "sent"]]);
    expect(carried[0]!.sentAt?.toISOString()).toBe("2026-11-01T08:00:01.000Z");
    const again = { to: "m@tankside.example", subject: "Calibration due", text: "x" };
    expect(await enqueueMail(again, { dedupeKey: "calibration-reminder:901" })).toBeNull();
    expect(await enqueueMail(again, { dedupeKey: "calibration-reminder:902" })).not.toBeNull();
  });
});
