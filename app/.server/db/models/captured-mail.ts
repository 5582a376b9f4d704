import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import { sequelize } from "../connection";

/** A message received by the local fake SMTP server (development, demo and tests only). */
export class CapturedMail extends Model<InferAttributes<CapturedMail>, InferCreationAttributes<CapturedMail>> {
  declare id: CreationOptional<number>;
  declare messageId: string | null;
  declare envelopeFrom: string | null;
  declare envelopeTo: string;
  declare subject: string;
  declare textBody: string;
  declare htmlBody: string | null;
  declare receivedAt: Date;
}

CapturedMail.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    messageId: { type: DataTypes.STRING(255), allowNull: true },
    envelopeFrom: { type: DataTypes.STRING(254), allowNull: true },
    envelopeTo: { type: DataTypes.TEXT, allowNull: false },
    subject: { type: DataTypes.STRING(500), allowNull: false, defaultValue: "" },
    textBody: { type: DataTypes.TEXT, allowNull: false, defaultValue: "" },
    htmlBody: { type: DataTypes.TEXT, allowNull: true },
    receivedAt: { type: DataTypes.DATE, allowNull: false },
  },
  { sequelize, tableName: "captured_mail", underscored: true, timestamps: false },
);

export class MailLog extends Model<InferAttributes<MailLog>, InferCreationAttributes<MailLog>> {
  declare id: CreationOptional<number>;
  declare recipients: string;
  declare subject: string;
  declare status: "sent" | "failed";
  declare error: string | null;
  declare createdAt: CreationOptional<Date>;
}

MailLog.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    recipients: { type: DataTypes.TEXT, allowNull: false },
    subject: { type: DataTypes.STRING(500), allowNull: false },
    status: { type: DataTypes.STRING(10), allowNull: false },
    error: { type: DataTypes.TEXT, allowNull: true },
    createdAt: DataTypes.DATE,
  },
  { sequelize, tableName: "mail_log", underscored: true, updatedAt: false },
);
