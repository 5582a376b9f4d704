import net from "node:net";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import nodemailer from "nodemailer";
import { Op } from "sequelize";
import { CapturedMail, OutboxMail, migrate, sequelize } from "../db";
import { stopFakeSmtp } from "./fake-smtp";
import { SMTP_TIMEOUTS } from "./send";
import { LEASE_MS, MAX_ATTEMPTS, enqueueMail, retryDelayMs, setEnqueueListener } from "./outbox";
import { OutboxSender } from "./outbox-sender";

let closedPort: number;

beforeAll(async () => {
  await migrate();
  // A port that was just free and is closed again: connecting to it is refused, as with a relay that is down.
  closedPort = await new Promise<number>((resolve) => {
    const server = net.createServer();
    server.listen(0, "127.0.0.1", () => {
      const { port } = server.address() as net.AddressInfo;
      server.close(() => resolve(port));
    });
  });
});

afterAll(async () => {
  await stopFakeSmtp();
  await sequelize.close();
});

let serial = 0;
const message = (label: string) => ({ to: [`person-${++serial}@tankside.example`], subject: `Outbox test ${label} ${serial}`, text: `Body of ${label}` });
const captured = (subject: string) => CapturedMail.findAll({ where: { subject } });
const clock = (start: Date) => {
  let t = start.getTime();
  return { now: () => new Date(t), advance: (ms: number) => (t += ms) };
};
const downRelay = () => async () => nodemailer.createTransport({ host: "127.0.0.1", port: closedPort, secure: false, ignoreTLS: true, ...SMTP_TIMEOUTS });

describe("the retry schedule", () => {
  it("waits 1 min after the first failure, doubling up to 1 h, and gives up after 10 attempts", () => {
    expect([1, 2, 3, 4, 5, 6, 7, 8, 9].map((n) => retryDelayMs(n) / 60_000)).toEqual([1, 2, 4, 8, 16, 32, 60, 60, 60]);
    expect(MAX_ATTEMPTS).toBe(10);
    expect(LEASE_MS).toBeGreaterThan(SMTP_TIMEOUTS.connectionTimeout + SMTP_TIMEOUTS.greetingTimeout + SMTP_TIMEOUTS.socketTimeout);
  });
});

describe("enqueueing", () => {
  it("writes the row with the caller's transaction: none after a rollback, one after a commit, and wakes the sender only after the commit", async () => {
    const rolledBack = message("rolled back");
    await expect(
      sequelize.transaction(async (transaction) => {
        await enqueueMail(rolledBack, { transaction });
        throw new Error("the change failed");
      }),
    ).rejects.toThrow("the change failed");
    expect(await OutboxMail.count({ where: { subject: rolledBack.subject } })).toBe(0);

    const committed = message("committed");
    const seenAtWake: number[] = [];
    let woken!: () => void;
    const wokenUp = new Promise<void>((resolve) => (woken = resolve));
    setEnqueueListener(() => {
      void OutboxMail.count({ where: { subject: committed.subject } }).then((n) => {
        seenAtWake.push(n);
        woken();
      });
    });
    await sequelize.transaction(async (transaction) => {
      await enqueueMail(committed, { transaction });
      expect(seenAtWake).toEqual([]);
    });
    await wokenUp;
    setEnqueueListener(null);
    // Read from outside the transaction when woken: the row was already there for the sender.
    expect(seenAtWake).toEqual([1]);
  });

  it("enqueues a keyed message once, however often it is asked for", async () => {
    const m = message("keyed");
    const key = `test-key-${serial}`;
    const results = await Promise.all([enqueueMail(m, { dedupeKey: key }), enqueueMail(m, { dedupeKey: key }), enqueueMail(m, { dedupeKey: key })]);
    expect(results.filter(Boolean)).toHaveLength(1);
    expect(await OutboxMail.count({ where: { dedupeKey: key } })).toBe(1);
  });

  it("queues nothing when there is nobody to send to", async () => {
    expect(await enqueueMail({ to: [], subject: "Nobody", text: "x" })).toBeNull();
    expect(await OutboxMail.count({ where: { subject: "Nobody" } })).toBe(0);
  });
});

describe("the sender", () => {
  it("delivers a queued row to the SMTP server and records it sent, without keeping the text", async () => {
    const m = message("delivered");
    const row = (await enqueueMail(m))!;
    const result = await new OutboxSender().drain();
    expect(result.sent).toContain(row.id);
    const got = await captured(m.subject);
    expect(got).toHaveLength(1);
    expect(got[0]!.envelopeTo).toBe(m.to[0]);
    expect(got[0]!.textBody).toContain("Body of delivered");
    await row.reload();
    expect(row.state).toBe("sent");
    expect(row.attempts).toBe(1);
    expect(row.sentAt).toBeInstanceOf(Date);
    expect(row.textBody).toBe("");
    expect(row.leaseOwner).toBeNull();
  });

  it("leaves a row queued with one more attempt and a later next try when the relay is down, and delivers it once the relay is back", async () => {
    const m = message("relay down");
    const row = (await enqueueMail(m))!;
    const t = clock(new Date(Date.now() + 1000));
    const down = new OutboxSender({ transport: downRelay(), now: t.now });
    const first = await down.drain();
    expect(first.retried).toContain(row.id);
    await row.reload();
    expect(row.state).toBe("queued");
    expect(row.attempts).toBe(1);
    expect(row.nextAttemptAt.getTime()).toBe(t.now().getTime() + 60_000);
    expect(row.lastError).toMatch(/ECONNREFUSED/);
    expect(row.textBody).toBe("Body of relay down");

    // Not due yet: nothing is tried.
    t.advance(30_000);
    expect((await down.drain()).retried).not.toContain(row.id);
    t.advance(31_000);
    const second = await down.drain();
    expect(second.retried).toContain(row.id);
    await row.reload();
    expect(row.attempts).toBe(2);
    expect(row.nextAttemptAt.getTime()).toBe(t.now().getTime() + 120_000);
    expect(await captured(m.subject)).toHaveLength(0);

    t.advance(120_000);
    const up = new OutboxSender({ now: t.now });
    expect((await up.drain()).sent).toContain(row.id);
    await row.reload();
    expect(row.state).toBe("sent");
    expect(row.attempts).toBe(3);
    expect(row.lastError).toBeNull();
    expect(await captured(m.subject)).toHaveLength(1);
  });

  it("marks a row failed, with the error, at its 10th failed attempt", async () => {
    const m = message("gives up");
    const row = (await enqueueMail(m))!;
    await row.update({ attempts: MAX_ATTEMPTS - 1 });
    const result = await new OutboxSender({ transport: downRelay(), now: () => new Date(Date.now() + 1000) }).drain();
    expect(result.failed).toContain(row.id);
    await row.reload();
    expect(row.state).toBe("failed");
    expect(row.attempts).toBe(MAX_ATTEMPTS);
    expect(row.lastError).toMatch(/ECONNREFUSED/);
  });

  it("does not take a live lease, and delivers a crashed sender's row again once its lease has run out", async () => {
    const m = message("crashed sender");
    const row = (await enqueueMail(m))!;
    const t = clock(new Date(Date.now() + 1000));
    // The first sender claims the row and then "dies": it never delivers nor reports back.
    const crashed = new OutboxSender({ now: t.now });
    const claimed = await crashed.claimNext();
    expect(claimed?.id).toBe(row.id);

    const fresh = new OutboxSender({ now: t.now });
    expect((await fresh.drain()).sent).not.toContain(row.id);
    t.advance(LEASE_MS - 1000);
    expect((await fresh.drain()).sent).not.toContain(row.id);
    expect(await captured(m.subject)).toHaveLength(0);

    t.advance(2000);
    expect((await fresh.drain()).sent).toContain(row.id);
    await row.reload();
    expect(row.state).toBe("sent");
    expect(row.attempts).toBe(2);
    expect(await captured(m.subject)).toHaveLength(1);
  });

  it("two senders draining at once deliver every row exactly once", async () => {
    const batch = Array.from({ length: 8 }, () => message("race"));
    for (const m of batch) await enqueueMail(m);
    const [a, b] = await Promise.all([new OutboxSender().drain(), new OutboxSender().drain()]);
    const ids = [...a.sent, ...b.sent];
    expect(new Set(ids).size).toBe(ids.length);
    for (const m of batch) expect(await captured(m.subject)).toHaveLength(1);
    expect(await OutboxMail.count({ where: { subject: { [Op.in]: batch.map((m) => m.subject) }, state: "sent" } })).toBe(batch.length);
  });

  it("once started, delivers what a commit enqueued without being asked, and stops cleanly", async () => {
    const sender = new OutboxSender();
    sender.start();
    const m = message("woken");
    const arrived = new Promise<void>((resolve) => {
      CapturedMail.addHook("afterCreate", "outbox-test", (row: CapturedMail) => {
        if (row.subject === m.subject) resolve();
      });
    });
    await sequelize.transaction((transaction) => enqueueMail(m, { transaction }));
    await arrived;
    CapturedMail.removeHook("afterCreate", "outbox-test");
    await sender.stop();
    expect((await OutboxMail.findOne({ where: { subject: m.subject } }))!.state).toBe("sent");
  });
});
