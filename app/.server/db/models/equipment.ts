import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import { sequelize } from "../connection";
import type { EquipmentKind, EquipmentStatus } from "~/lib/equipment";

export class Equipment extends Model<InferAttributes<Equipment>, InferCreationAttributes<Equipment>> {
  declare id: CreationOptional<number>;
  declare kind: EquipmentKind;
  declare name: string;
  declare status: CreationOptional<EquipmentStatus>;
  declare maker: string | null;
  declare model: string | null;
  declare serialNumber: string | null;
  declare location: string | null;
  declare notes: string | null;
  declare diameterM: number | null;
  declare maxRateRpm: number | null;
  declare flatTable: boolean | null;
  declare rateTolerancePct: number | null;
  declare depthM: number | null;
  declare resolutionWidthPx: number | null;
  declare resolutionHeightPx: number | null;
  declare nominalFrameRateFps: number | null;
  /** camera: % a view setup's scale may differ from the scale calibration before a run is flagged */
  declare scaleTolerancePct: number | null;
  declare meterType: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

Equipment.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    kind: { type: DataTypes.STRING(20), allowNull: false },
    name: { type: DataTypes.STRING(120), allowNull: false },
    status: { type: DataTypes.STRING(20), allowNull: false, defaultValue: "in_service" },
    maker: { type: DataTypes.STRING(120), allowNull: true },
    model: { type: DataTypes.STRING(120), allowNull: true },
    serialNumber: { type: DataTypes.STRING(120), allowNull: true },
    location: { type: DataTypes.STRING(120), allowNull: true },
    notes: { type: DataTypes.TEXT, allowNull: true },
    diameterM: { type: DataTypes.DOUBLE, allowNull: true },
    maxRateRpm: { type: DataTypes.DOUBLE, allowNull: true },
    flatTable: { type: DataTypes.BOOLEAN, allowNull: true },
    rateTolerancePct: { type: DataTypes.DOUBLE, allowNull: true },
    depthM: { type: DataTypes.DOUBLE, allowNull: true },
    resolutionWidthPx: { type: DataTypes.INTEGER, allowNull: true },
    resolutionHeightPx: { type: DataTypes.INTEGER, allowNull: true },
    nominalFrameRateFps: { type: DataTypes.DOUBLE, allowNull: true },
    scaleTolerancePct: { type: DataTypes.DOUBLE, allowNull: true },
    meterType: { type: DataTypes.STRING(40), allowNull: true },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  },
  { sequelize, tableName: "equipment", underscored: true },
);
