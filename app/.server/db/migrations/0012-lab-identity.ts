import { randomUUID } from "node:crypto";
import type { QueryInterface } from "sequelize";

// The lab's own identifier, made once: iCalendar UIDs are built from it and the booking id, so a
// booking keeps its UID when APP_URL (or the host name) changes. The lab's time zone needs no
// schema change: it is one more row in lab_settings, written from the settings page.
export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.bulkInsert("lab_settings", [{ key: "labId", value: randomUUID(), updated_at: new Date() }]);
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.bulkDelete("lab_settings", { key: "labId" });
}
