import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import { sequelize } from "../connection";
import type { RunState, Verdict } from "~/lib/runs";

export class Run extends Model<InferAttributes<Run>, InferCreationAttributes<Run>> {
  declare id: CreationOptional<number>;
  declare state: CreationOptional<RunState>;
  declare tableId: number;
  declare tankId: number;
  declare cameraId: number;
  declare setRateRpm: number;
  declare direction: "ccw" | "cw";
  declare waterDepthM: number;
  declare waterTemperatureC: number;
  declare rateReachedAt: Date | null;
  declare cameraMode: "rotating" | "lab";
  declare frameRateFps: number;
  declare tracer: "float" | "dye";
  declare purpose: string;
  declare notes: string | null;
  declare technicianId: number;
  declare supersedesId: number | null;
  declare signedOffById: number | null;
  declare signedOffAt: Date | null;
  /** JSON: the calibration records in force when the run was logged (ids and kinds). */
  declare calibrationsInForce: string | null;
  declare verdict: Verdict | null;
  declare frameCount: CreationOptional<number>;
  declare frameWidthPx: number | null;
  declare frameHeightPx: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

Run.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    state: { type: DataTypes.STRING(20), allowNull: false, defaultValue: "draft" },
    tableId: { type: DataTypes.INTEGER, allowNull: false },
    tankId: { type: DataTypes.INTEGER, allowNull: false },
    cameraId: { type: DataTypes.INTEGER, allowNull: false },
    setRateRpm: { type: DataTypes.DOUBLE, allowNull: false },
    direction: { type: DataTypes.STRING(4), allowNull: false },
    waterDepthM: { type: DataTypes.DOUBLE, allowNull: false },
    waterTemperatureC: { type: DataTypes.DOUBLE, allowNull: false },
    rateReachedAt: { type: DataTypes.DATE, allowNull: true },
    cameraMode: { type: DataTypes.STRING(10), allowNull: false },
    frameRateFps: { type: DataTypes.DOUBLE, allowNull: false },
    tracer: { type: DataTypes.STRING(10), allowNull: false },
    purpose: { type: DataTypes.STRING(300), allowNull: false },
    notes: { type: DataTypes.TEXT, allowNull: true },
    technicianId: { type: DataTypes.INTEGER, allowNull: false },
    supersedesId: { type: DataTypes.INTEGER, allowNull: true },
    signedOffById: { type: DataTypes.INTEGER, allowNull: true },
    signedOffAt: { type: DataTypes.DATE, allowNull: true },
    calibrationsInForce: { type: DataTypes.TEXT, allowNull: true },
    verdict: { type: DataTypes.STRING(15), allowNull: true },
    frameCount: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    frameWidthPx: { type: DataTypes.INTEGER, allowNull: true },
    frameHeightPx: { type: DataTypes.INTEGER, allowNull: true },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  },
  { sequelize, tableName: "runs", underscored: true },
);
