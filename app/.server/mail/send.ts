import nodemailer, { type Transporter } from "nodemailer";
import { env } from "../env";
import { startFakeSmtp } from "./fake-smtp";

/**
 * True when no real relay is configured and mail goes to the built-in fake server, whose inbox the
 * lab manager can read. In production that needs TANKSIDE_FAKE_MAIL=1 (boot refuses otherwise).
 */
export const usingFakeMail = !env.smtpUrl && (!env.isProduction || env.fakeMailRequested);

/**
 * A relay that stops answering must not hold a send (and the outbox row's lease) for nodemailer's
 * default ten minutes: these bound each step, and the outbox's lease is longer than their sum.
 */
export const SMTP_TIMEOUTS = { connectionTimeout: 10_000, greetingTimeout: 10_000, socketTimeout: 20_000 } as const;

let transporter: Promise<Transporter> | null = null;

export function getTransporter(): Promise<Transporter> {
  transporter ??= (async () => {
    if (env.smtpUrl) return nodemailer.createTransport({ url: env.smtpUrl, ...SMTP_TIMEOUTS });
    if (!usingFakeMail) throw new Error("SMTP_URL is not set (and TANKSIDE_FAKE_MAIL=1 was not given)");
    const { port } = await startFakeSmtp();
    return nodemailer.createTransport({ host: "127.0.0.1", port, secure: false, ignoreTLS: true, ...SMTP_TIMEOUTS });
  })();
  // A failed set-up (the fake server could not listen) is tried afresh next time.
  transporter.catch(() => {
    transporter = null;
  });
  return transporter;
}

export interface OutgoingMail {
  to: string | string[];
  subject: string;
  text: string;
  html?: string;
}

/** Hands one message to the relay; throws with the relay's or the network's error. */
export async function deliverMail(mail: OutgoingMail, transport?: Transporter): Promise<void> {
  const recipients = Array.isArray(mail.to) ? mail.to : [mail.to];
  if (recipients.length === 0) throw new Error("no recipients");
  await (transport ?? (await getTransporter())).sendMail({ from: env.mailFrom, to: recipients, subject: mail.subject, text: mail.text, html: mail.html });
}

export function resetMailTransport() {
  transporter = null;
}
