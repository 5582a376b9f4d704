import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { callApi } from "../../../tests/support/api-contract";
import { CapturedMail, OutboxMail, sequelize } from "~/.server/db";
import { createApiToken } from "~/.server/auth/api-tokens";
import type { CurrentUser } from "~/.server/auth/permissions";
import { stopFakeSmtp } from "~/.server/mail/fake-smtp";
import { MAX_ATTEMPTS, enqueueMail, listOutbox, setEnqueueListener } from "~/.server/mail/outbox";
import { OutboxSender } from "~/.server/mail/outbox-sender";
import { postPageForm, smallLab } from "~/.server/test-support";
import { action as sendAgainAction, loader as sendAgainLoader } from "./mail-outbox-send-again";
import { action as mailPageAction } from "../people/mail";

/** A failed e-mail sent again by the lab manager: from the API and from its row on the mail page. */
let lab: Awaited<ReturnType<typeof smallLab>>;
const tokens = new Map<number, string>();

beforeAll(async () => {
  lab = await smallLab();
  for (const p of [lab.tech, lab.manager]) tokens.set(p.id, (await createApiToken(p.id, "script")).token);
  // No sender runs in this file: each test drains the outbox itself.
  setEnqueueListener(null);
});

afterAll(async () => {
  await stopFakeSmtp();
  await sequelize.close();
});

let serial = 0;
/** A message the sender gave up on: ten failed attempts, the relay's last error kept. */
async function failedMessage() {
  const subject = `Send-again test ${++serial} ${Math.random().toString(36).slice(2, 8)}`;
  const row = (await enqueueMail({ to: [`person-${serial}@tankside.example`], subject, text: `Body ${serial}` }))!;
  await row.update({ state: "failed", attempts: MAX_ATTEMPTS, lastError: "connect ECONNREFUSED 127.0.0.1:2525" });
  return row;
}

const post = (id: number | string, who: CurrentUser, method = "POST") =>
  callApi(
    method === "GET" ? sendAgainLoader : sendAgainAction,
    new Request(`http://localhost/api/v1/mail/outbox/${id}/send-again`, { method, headers: { Authorization: `Bearer ${tokens.get(who.id)}` } }),
    { id: String(id) },
  );

const pagePost = (who: CurrentUser, fields: Record<string, string>) => postPageForm(mailPageAction as never, "/mail", who, fields);

describe("sending a failed e-mail again", () => {
  it("queues it afresh with its attempts from nought, and the sender then delivers it to the SMTP server", async () => {
    const row = await failedMessage();
    const res = await post(row.id, lab.manager);
    expect(res.status).toBe(200);
    const view = (await res.json()) as { state: string; attempts: number; lastError: string | null; nextAttemptAt: string | null };
    expect(view).toMatchObject({ state: "queued", attempts: 0, sending: false, lastError: "connect ECONNREFUSED 127.0.0.1:2525" });
    expect(Date.parse(view.nextAttemptAt!)).toBeLessThanOrEqual(Date.now());

    // While a sender holds it, the outbox says it is being sent, not that an attempt failed.
    const sender = new OutboxSender();
    const held = (await sender.claim(row.id))!;
    expect((await listOutbox()).find((m) => m.id === row.id)).toMatchObject({ state: "queued", attempts: 1, sending: true });
    expect(await sender.deliver(held)).toBe("sent");
    await row.reload();
    expect(row.state).toBe("sent");
    expect(row.attempts).toBe(1);
    expect(await CapturedMail.count({ where: { subject: row.subject } })).toBe(1);
  });

  it("refuses a sent or queued message with 409 and leaves it as it was; an unknown one is 404; a technician gets 403; GET is 405", async () => {
    const sent = await failedMessage();
    await post(sent.id, lab.manager);
    await new OutboxSender().drain();
    const again = await post(sent.id, lab.manager);
    expect(again.status).toBe(409);
    expect(await again.json()).toMatchObject({ error: { code: "not_failed", message: expect.stringMatching(/it was sent/) } });
    expect(await CapturedMail.count({ where: { subject: sent.subject } })).toBe(1);

    const queued = (await enqueueMail({ to: ["waiting@tankside.example"], subject: `Still queued ${serial}`, text: "x" }))!;
    const busy = await post(queued.id, lab.manager);
    expect(busy.status).toBe(409);
    expect(await busy.json()).toMatchObject({ error: { message: expect.stringMatching(/still queued/) } });
    await queued.reload();
    expect(queued.attempts).toBe(0);

    expect((await post(2_000_000_000, lab.manager)).status).toBe(404);
    expect((await post("abc", lab.manager)).status).toBe(404);
    const failed = await failedMessage();
    expect((await post(failed.id, lab.tech)).status).toBe(403);
    expect((await failed.reload()).state).toBe("failed");
    expect((await post(failed.id, lab.manager, "GET")).status).toBe(405);
    await OutboxMail.destroy({ where: { id: [queued.id, failed.id] } });
  });

  it("the mail page's row button queues it again and says so in the row; a second press is refused in words", async () => {
    const row = await failedMessage();
    const first = await pagePost(lab.manager, { intent: "send-again", id: String(row.id) });
    expect(first).toEqual({ status: 200, body: { notice: "Queued again; it is being sent now." } });
    expect((await row.reload()).state).toBe("queued");
    await new OutboxSender().drain();
    const second = await pagePost(lab.manager, { intent: "send-again", id: String(row.id) });
    expect(second.status).toBe(409);
    expect(second.body.problem).toBe("Only a failed message can be sent again; it was sent.");
    expect((await pagePost(lab.manager, { intent: "send-again", id: "x" })).status).toBe(400);
  });
});
