import { Op } from "sequelize";
import { ApiToken, User } from "../db";
import { hashToken, newSecretToken } from "./tokens";

const PREFIX = "tks_";

/** Returns the token's owner, null for no bearer token, or "invalid" for a wrong or revoked one. */
export async function userFromBearerToken(header: string): Promise<User | null | "invalid"> {
  const match = /^Bearer\s+(\S+)$/i.exec(header.trim());
  if (!match) return "invalid";
  const token = match[1];
  if (!token.startsWith(PREFIX)) return "invalid";
  const row = await ApiToken.findOne({ where: { tokenHash: hashToken(token), revokedAt: { [Op.is]: null } } });
  if (!row) return "invalid";
  const user = await User.findByPk(row.userId);
  if (!user || !user.active) return "invalid";
  // Recording use at most once a minute keeps reads from turning into writes on every call.
  if (!row.lastUsedAt || Date.now() - row.lastUsedAt.getTime() > 60_000) {
    await row.update({ lastUsedAt: new Date() });
  }
  return user;
}

export async function createApiToken(userId: number, label: string) {
  const token = PREFIX + newSecretToken(30);
  const row = await ApiToken.create({
    userId,
    label,
    tokenHash: hashToken(token),
    tokenPrefix: token.slice(0, 10),
    lastUsedAt: null,
    revokedAt: null,
  });
  return { token, row };
}

export async function revokeApiToken(userId: number, tokenId: number): Promise<boolean> {
  const [count] = await ApiToken.update(
    { revokedAt: new Date() },
    { where: { id: tokenId, userId, revokedAt: { [Op.is]: null } } },
  );
  return count > 0;
}

export function listApiTokens(userId: number) {
  return ApiToken.findAll({ where: { userId }, order: [["createdAt", "DESC"]] });
}
