import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import { sequelize } from "../connection";
import type { BookingState } from "~/lib/bookings";

export class Booking extends Model<InferAttributes<Booking>, InferCreationAttributes<Booking>> {
  declare id: CreationOptional<number>;
  declare equipmentId: number;
  declare requesterId: number;
  declare state: BookingState;
  declare startAt: Date;
  declare endAt: Date;
  declare purpose: string;
  declare plannedRateRpm: number | null;
  declare plannedDepthM: number | null;
  /** The spin-up lead time added before the slot the requester asked for, when they took the proposal. */
  declare spinUpLeadS: number | null;
  declare decidedById: number | null;
  declare decidedAt: Date | null;
  declare declineReason: string | null;
  declare cancelledById: number | null;
  declare cancelledAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

Booking.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    equipmentId: { type: DataTypes.INTEGER, allowNull: false },
    requesterId: { type: DataTypes.INTEGER, allowNull: false },
    state: { type: DataTypes.STRING(10), allowNull: false, defaultValue: "requested" },
    startAt: { type: DataTypes.DATE, allowNull: false },
    endAt: { type: DataTypes.DATE, allowNull: false },
    purpose: { type: DataTypes.STRING(300), allowNull: false },
    plannedRateRpm: { type: DataTypes.DOUBLE, allowNull: true },
    plannedDepthM: { type: DataTypes.DOUBLE, allowNull: true },
    spinUpLeadS: { type: DataTypes.DOUBLE, allowNull: true },
    decidedById: { type: DataTypes.INTEGER, allowNull: true },
    decidedAt: { type: DataTypes.DATE, allowNull: true },
    declineReason: { type: DataTypes.STRING(500), allowNull: true },
    cancelledById: { type: DataTypes.INTEGER, allowNull: true },
    cancelledAt: { type: DataTypes.DATE, allowNull: true },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  },
  { sequelize, tableName: "bookings", underscored: true },
);

export class CalendarFeed extends Model<InferAttributes<CalendarFeed>, InferCreationAttributes<CalendarFeed>> {
  declare id: CreationOptional<number>;
  declare userId: number;
  declare tokenHash: string;
  declare tokenPrefix: string;
  declare lastUsedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
}

CalendarFeed.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    userId: { type: DataTypes.INTEGER, allowNull: false },
    tokenHash: { type: DataTypes.STRING(64), allowNull: false },
    tokenPrefix: { type: DataTypes.STRING(12), allowNull: false },
    lastUsedAt: { type: DataTypes.DATE, allowNull: true },
    createdAt: DataTypes.DATE,
  },
  // One feed per person, as migration 0004 made it; declared here so upsert knows its ON CONFLICT target.
  { sequelize, tableName: "calendar_feeds", underscored: true, updatedAt: false, indexes: [{ unique: true, fields: ["user_id"] }] },
);
