import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import { sequelize } from "../connection";

/** Why a token stopped working: its owner revoked it, changed their password, or was deactivated. */
export type ApiTokenRevokedReason = "revoked" | "password_changed" | "deactivated";

/** A personal API token: shown once, stored as a SHA-256, acts with its owner's role. */
export class ApiToken extends Model<InferAttributes<ApiToken>, InferCreationAttributes<ApiToken>> {
  declare id: CreationOptional<number>;
  declare userId: number;
  declare label: string;
  declare tokenHash: string;
  declare tokenPrefix: string;
  declare lastUsedAt: Date | null;
  declare revokedAt: Date | null;
  declare revokedReason: ApiTokenRevokedReason | null;
  declare expiresAt: Date;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

ApiToken.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    userId: { type: DataTypes.INTEGER, allowNull: false },
    label: { type: DataTypes.STRING(80), allowNull: false },
    tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    tokenPrefix: { type: DataTypes.STRING(16), allowNull: false },
    lastUsedAt: { type: DataTypes.DATE, allowNull: true },
    revokedAt: { type: DataTypes.DATE, allowNull: true },
    revokedReason: { type: DataTypes.STRING(30), allowNull: true },
    expiresAt: { type: DataTypes.DATE, allowNull: false },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  },
  { sequelize, tableName: "api_tokens", underscored: true },
);
