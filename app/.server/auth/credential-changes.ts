import { endAllSessionsOf } from "./session";
import { revokeAllApiTokensOf } from "./api-tokens";
import { notifySecurityEvent } from "./notices";

/**
 * What follows a new password, whoever set it: every other session ends and every API token stops
 * (OWASP ASVS 4.0.3 V3.3.3), and the person is told by e-mail (V2.2.3). A first password chosen
 * from an invitation changes nothing anyone had, so no notice goes out for it.
 */
export async function afterPasswordChange(
  user: { id: number; email: string; name: string },
  change: { via: "account" | "reset" | "invitation"; keepSessionId?: string },
) {
  await endAllSessionsOf(user.id, change.keepSessionId);
  await revokeAllApiTokensOf(user.id, "password_changed");
  if (change.via !== "invitation") await notifySecurityEvent(user, { kind: "password_changed", via: change.via });
}

/** A deactivated person's sessions and API tokens all end at once. */
export async function afterDeactivation(userId: number) {
  await endAllSessionsOf(userId);
  await revokeAllApiTokensOf(userId, "deactivated");
}
