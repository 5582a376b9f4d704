import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import { sequelize } from "../connection";

export type OutboxState = "queued" | "sent" | "failed";

/**
 * One e-mail waiting to go out, gone out, or given up on. Written in the same transaction as the
 * change that causes it; the sender claims a due row with a lease (owner and expiry) so a crash
 * mid-send leaves it to be tried again once the lease runs out.
 */
export class OutboxMail extends Model<InferAttributes<OutboxMail>, InferCreationAttributes<OutboxMail>> {
  declare id: CreationOptional<number>;
  /** Addresses joined with ", ". */
  declare recipients: string;
  declare subject: string;
  /** Emptied once sent: bodies may hold single-use links, which need not outlive delivery here. */
  declare textBody: string;
  declare htmlBody: string | null;
  declare state: CreationOptional<OutboxState>;
  declare attempts: CreationOptional<number>;
  declare nextAttemptAt: Date;
  declare leaseOwner: CreationOptional<string | null>;
  declare leaseUntil: CreationOptional<Date | null>;
  declare lastError: CreationOptional<string | null>;
  declare sentAt: CreationOptional<Date | null>;
  declare dedupeKey: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

OutboxMail.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    recipients: { type: DataTypes.TEXT, allowNull: false },
    subject: { type: DataTypes.STRING(500), allowNull: false },
    textBody: { type: DataTypes.TEXT, allowNull: false },
    htmlBody: { type: DataTypes.TEXT, allowNull: true },
    state: { type: DataTypes.STRING(10), allowNull: false, defaultValue: "queued" },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    nextAttemptAt: { type: DataTypes.DATE, allowNull: false },
    leaseOwner: { type: DataTypes.STRING(64), allowNull: true, defaultValue: null },
    leaseUntil: { type: DataTypes.DATE, allowNull: true, defaultValue: null },
    lastError: { type: DataTypes.TEXT, allowNull: true, defaultValue: null },
    sentAt: { type: DataTypes.DATE, allowNull: true, defaultValue: null },
    dedupeKey: { type: DataTypes.STRING(120), allowNull: true, defaultValue: null, unique: true },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  },
  { sequelize, tableName: "mail_outbox", underscored: true },
);
