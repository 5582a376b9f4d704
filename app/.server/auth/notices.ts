import { env } from "../env";
import type { Transaction } from "sequelize";
import { enqueueMail, mailQueued, type MailQueued } from "../mail/outbox";
import { timeFormat } from "~/lib/time-format";
import { getLabTimeZone } from "../settings";

/** Changes to how someone signs in that they must hear about, in case it was not them. */
export type SecurityEvent = { kind: "password_changed"; via: "account" | "reset" } | { kind: "api_token_created"; label: string; expiresAt: Date };

/**
 * Tells a person by e-mail that their password changed or that an API token was made in their name
 * (OWASP ASVS 4.0.3 V2.2.3). The one place such notices come from; they go through the durable
 * outbox, in the transaction of the change when there is one.
 */
export async function notifySecurityEvent(user: { email: string; name: string }, event: SecurityEvent, transaction?: Transaction): Promise<MailQueued> {
  const notYou = `If this was not you, reset your password now at ${env.appUrl}/forgot-password and tell your lab manager.`;
  if (event.kind === "password_changed") {
    const row = await enqueueMail(
      {
        to: user.email,
        subject: "Your Tankside password was changed",
        text: [
          `Hello ${user.name},`,
          "",
          event.via === "reset"
            ? "Your Tankside password was just set again through a reset link."
            : "Your Tankside password was just changed from your account page.",
          "Every other signed-in browser has been signed out and every API token of yours has stopped working.",
          "",
          notYou,
        ].join("\n"),
      },
      { transaction },
    );
    return mailQueued(row);
  }
  const time = timeFormat(await getLabTimeZone(transaction));
  const row = await enqueueMail(
    {
      to: user.email,
      subject: "A new Tankside API token was made",
      text: [
        `Hello ${user.name},`,
        "",
        `An API token named "${event.label}" was just made for your account. It acts with your role and works until ${time.dateTime(event.expiresAt)} unless revoked.`,
        `You can see and revoke your tokens at ${env.appUrl}/account.`,
        "",
        notYou,
      ].join("\n"),
    },
    { transaction },
  );
  return mailQueued(row);
}
