import nodemailer, { type Transporter } from "nodemailer";
import { MailLog } from "../db";
import { env } from "../env";
import { startFakeSmtp } from "./fake-smtp";

/**
 * True when no real relay is configured and mail goes to the built-in fake server, whose inbox the
 * lab manager can read. In production that needs TANKSIDE_FAKE_MAIL=1 (boot refuses otherwise).
 */
export const usingFakeMail = !env.smtpUrl && (!env.isProduction || env.fakeMailRequested);

let transporter: Promise<Transporter> | null = null;

function getTransporter(): Promise<Transporter> {
  transporter ??= (async () => {
    if (env.smtpUrl) return nodemailer.createTransport(env.smtpUrl);
    if (!usingFakeMail) throw new Error("SMTP_URL is not set (and TANKSIDE_FAKE_MAIL=1 was not given)");
    const { port } = await startFakeSmtp();
    return nodemailer.createTransport({ host: "127.0.0.1", port, secure: false, ignoreTLS: true });
  })();
  return transporter;
}

export interface OutgoingMail {
  to: string | string[];
  subject: string;
  text: string;
  html?: string;
}

export type MailOutcome = { ok: true } | { ok: false; error: string };

/**
 * Sends one message. Failures are logged to the console and to the mail log, and returned so the
 * page can tell the person the mail did not go; they are never swallowed.
 */
export async function sendMail(mail: OutgoingMail): Promise<MailOutcome> {
  const recipients = Array.isArray(mail.to) ? mail.to : [mail.to];
  try {
    if (recipients.length === 0) throw new Error("no recipients");
    const transport = await getTransporter();
    await transport.sendMail({ from: env.mailFrom, to: recipients, subject: mail.subject, text: mail.text, html: mail.html });
    await MailLog.create({ recipients: recipients.join(", "), subject: mail.subject, status: "sent", error: null });
    return { ok: true };
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    console.error(`[mail] could not send "${mail.subject}" to ${recipients.join(", ")}: ${message}`);
    await MailLog.create({ recipients: recipients.join(", "), subject: mail.subject, status: "failed", error: message }).catch(
      () => undefined,
    );
    return { ok: false, error: message };
  }
}

export function resetMailTransport() {
  transporter = null;
}
