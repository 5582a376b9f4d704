import type { AddressInfo } from "node:net";
import { SMTPServer } from "smtp-server";
import { simpleParser } from "mailparser";
import { CapturedMail } from "../db";

/**
 * A local SMTP server for development, the demo and tests: it accepts every message on
 * 127.0.0.1 and keeps it in the database, where the lab manager's mail page shows it.
 */
type FakeSmtp = { server: SMTPServer; port: number };
const key = "__tanksideFakeSmtp" as const;
const g = globalThis as typeof globalThis & { [key]?: Promise<FakeSmtp> };

export function startFakeSmtp(): Promise<FakeSmtp> {
  g[key] ??= new Promise<FakeSmtp>((resolve, reject) => {
    const server = new SMTPServer({
      secure: false,
      disabledCommands: ["STARTTLS", "AUTH"],
      logger: false,
      size: 10 * 1024 * 1024,
      onData(stream, session, callback) {
        simpleParser(stream)
          .then(async (parsed) => {
            await CapturedMail.create({
              messageId: parsed.messageId ?? null,
              envelopeFrom: session.envelope.mailFrom ? session.envelope.mailFrom.address : null,
              envelopeTo: session.envelope.rcptTo.map((r) => r.address).join(", "),
              subject: parsed.subject ?? "",
              textBody: parsed.text ?? "",
              htmlBody: typeof parsed.html === "string" ? parsed.html : null,
              receivedAt: new Date(),
            });
            callback();
          })
          .catch((err: Error) => callback(err));
      },
    });
    server.on("error", (err) => console.error("[fake smtp]", err.message));
    server.listen(0, "127.0.0.1", () => {
      const address = server.server.address() as AddressInfo;
      resolve({ server, port: address.port });
    });
    server.server.once("error", reject);
  });
  return g[key];
}

export async function stopFakeSmtp() {
  const running = g[key];
  if (!running) return;
  g[key] = undefined;
  const { server } = await running;
  await new Promise<void>((resolve) => server.close(() => resolve()));
}

export function fakeSmtpStarted() {
  return Boolean(g[key]);
}
