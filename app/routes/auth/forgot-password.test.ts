import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";

// A relay that refuses every connection, set before the modules read their settings: nothing listens on port 1.
vi.hoisted(() => {
  process.env.SMTP_URL = "smtp://127.0.0.1:1";
});

import { AuthToken, OutboxMail, User, migrate, sequelize } from "~/.server/db";
import { OutboxSender } from "~/.server/mail/outbox-sender";
import { passwordResetsSettled } from "~/.server/people";
import { action } from "./forgot-password";

const REAL = "reset-real@tankside.example";
const UNKNOWN = "reset-nobody@tankside.example";
let userId: number;

beforeAll(async () => {
  await migrate();
  userId = (await User.create({ email: REAL, name: "Rosa Reset", role: "technician", passwordHash: "x", passwordChangedAt: null })).id;
});

afterAll(async () => {
  await sequelize.close();
});

/** The action's answer as the browser gets it (status and body), once the link it asked for is written. */
async function ask(email: string) {
  const request = new Request("http://localhost/forgot-password", { method: "POST", body: new URLSearchParams({ email }) });
  const result = (await action({ request, params: {}, context: {} } as never)) as unknown;
  await passwordResetsSettled();
  const wrapped = result as { type?: string; data?: unknown; init?: { status?: number } | null };
  return wrapped?.type === "DataWithResponseInit"
    ? { status: wrapped.init?.status ?? 200, body: JSON.stringify(wrapped.data) }
    : { status: 200, body: JSON.stringify(result) };
}

describe("forgot password (OWASP ASVS 4.0.3 V2.5.7: no account enumeration)", () => {
  it("answers a real and an unknown address identically, and no mail-server error reaches the page, even with the relay down", async () => {
    const real = await ask(REAL);
    const unknown = await ask(UNKNOWN);
    expect(real).toEqual(unknown);
    expect(real.status).toBe(200);
    expect(JSON.parse(real.body)).toMatchObject({ sent: true });

    // The sender tries, and the relay refuses: the failure is recorded on the outbox row only.
    const row = await OutboxMail.findOne({ where: { recipients: REAL, subject: "Reset your Tankside password" } });
    expect(row).not.toBeNull();
    await new OutboxSender().drain();
    await row!.reload();
    expect(row!.state).toBe("queued");
    expect(row!.lastError).toMatch(/ECONNREFUSED/);

    const again = await ask(REAL);
    expect(again).toEqual(await ask(UNKNOWN));
    for (const answer of [real, unknown, again]) {
      expect(answer.body).not.toMatch(/ECONNREFUSED|mail server|could not be sent|127\.0\.0\.1/i);
    }
  });

  it("queues the link only for an active account, and makes a token only for it", async () => {
    const before = await OutboxMail.count();
    await ask(UNKNOWN);
    expect(await OutboxMail.count()).toBe(before);
    await User.update({ active: false }, { where: { id: userId } });
    const tokens = await AuthToken.count({ where: { userId } });
    await ask(REAL);
    expect(await OutboxMail.count()).toBe(before);
    expect(await AuthToken.count({ where: { userId } })).toBe(tokens);
    await User.update({ active: true }, { where: { id: userId } });
    await ask(` ${REAL.toUpperCase()} `);
    expect(await OutboxMail.count()).toBe(before + 1);
    expect(await AuthToken.count({ where: { userId } })).toBe(tokens + 1);
  });
});
