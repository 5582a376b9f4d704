import { Op, type Transaction } from "sequelize";
import { ApiToken, User, sequelize } from "../db";
import type { ApiTokenRevokedReason } from "../db/models/api-token";
import { hashToken, newSecretToken } from "./tokens";
import { notifySecurityEvent } from "./notices";
import { API_TOKEN_DEFAULT_DAYS, API_TOKEN_MAX_DAYS } from "~/lib/validation/api-tokens";

const PREFIX = "tks_";
const DAY_MS = 24 * 3600 * 1000;
/** Use is recorded at most once a minute, so reading through the API does not write on every call. */
export const LAST_USED_WRITE_MS = 60_000;

/** Why a bearer token was not accepted; each answers 401 with its own code. */
export type BearerRefusal = { refused: "invalid_token" | "token_expired" | "token_revoked"; message: string };

const revokedWhy: Record<ApiTokenRevokedReason, string> = {
  revoked: "its owner revoked it",
  password_changed: "its owner's password was changed",
  deactivated: "its owner's account was deactivated",
};

/**
 * The token's owner, or why the token is refused. Tokens are random (V3.2.2), stored hashed, expire
 * (V3.3.1) and end with a password change or deactivation (V3.3.3) — OWASP ASVS 4.0.3. Only someone
 * holding the real secret learns that it expired or was revoked; anything else is simply "invalid".
 */
export async function userFromBearerToken(header: string): Promise<User | BearerRefusal> {
  const invalid: BearerRefusal = {
    refused: "invalid_token",
    message: "That API token is not valid. Check it was copied whole, or make a new one on your account page.",
  };
  const match = /^Bearer\s+(\S+)$/i.exec(header.trim());
  if (!match?.[1]?.startsWith(PREFIX)) return invalid;
  const row = await ApiToken.findOne({ where: { tokenHash: hashToken(match[1]) } });
  if (!row) return invalid;
  if (row.revokedAt) {
    return {
      refused: "token_revoked",
      message: `That API token was revoked because ${revokedWhy[row.revokedReason ?? "revoked"]}. Make a new one on your account page.`,
    };
  }
  const now = Date.now();
  if (row.expiresAt.getTime() <= now) {
    return { refused: "token_expired", message: `That API token expired on ${row.expiresAt.toISOString()}. Make a new one on your account page.` };
  }
  const user = await User.findByPk(row.userId);
  if (!user || !user.active) return { refused: "token_revoked", message: `That API token no longer works because ${revokedWhy.deactivated}.` };
  // Conditional: of two requests in the same minute only one writes.
  await ApiToken.update(
    { lastUsedAt: new Date(now) },
    { where: { id: row.id, [Op.or]: [{ lastUsedAt: { [Op.is]: null } }, { lastUsedAt: { [Op.lte]: new Date(now - LAST_USED_WRITE_MS) } }] } },
  );
  return user;
}

/** Makes a token without telling anyone: for tests, seeds and benchmarks. People use issueApiToken. */
export async function createApiToken(userId: number, label: string, expiresInDays = API_TOKEN_DEFAULT_DAYS, transaction?: Transaction) {
  if (!Number.isInteger(expiresInDays) || expiresInDays < 1 || expiresInDays > API_TOKEN_MAX_DAYS) {
    throw new RangeError(`A token works for 1 to ${API_TOKEN_MAX_DAYS} days.`);
  }
  const token = PREFIX + newSecretToken(30);
  const row = await ApiToken.create(
    {
      userId,
      label,
      tokenHash: hashToken(token),
      tokenPrefix: token.slice(0, 10),
      lastUsedAt: null,
      revokedAt: null,
      revokedReason: null,
      expiresAt: new Date(Date.now() + expiresInDays * DAY_MS),
    },
    { transaction },
  );
  return { token, row };
}

/** A token made by its owner on the account page: the owner gets an e-mail saying so (OWASP ASVS 4.0.3 V2.2.3). */
export async function issueApiToken(user: { id: number; email: string; name: string }, input: { label: string; expiresInDays: number }) {
  // The token and its notice commit together: no token without its e-mail.
  return sequelize.transaction(async (transaction) => {
    const made = await createApiToken(user.id, input.label, input.expiresInDays, transaction);
    const mail = await notifySecurityEvent(user, { kind: "api_token_created", label: input.label, expiresAt: made.row.expiresAt }, transaction);
    return { ...made, mail };
  });
}

export async function revokeApiToken(userId: number, tokenId: number): Promise<boolean> {
  const [count] = await ApiToken.update({ revokedAt: new Date(), revokedReason: "revoked" }, { where: { id: tokenId, userId, revokedAt: { [Op.is]: null } } });
  return count > 0;
}

/** Ends every working token of a person at once; returns how many. */
export async function revokeAllApiTokensOf(userId: number, reason: ApiTokenRevokedReason): Promise<number> {
  const [count] = await ApiToken.update({ revokedAt: new Date(), revokedReason: reason }, { where: { userId, revokedAt: { [Op.is]: null } } });
  return count;
}

export function listApiTokens(userId: number) {
  return ApiToken.findAll({
    where: { userId },
    order: [
      ["createdAt", "DESC"],
      ["id", "DESC"],
    ],
  });
}
