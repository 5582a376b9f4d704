import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import { sequelize } from "../connection";
import type { EquipmentKind, EquipmentStatus } from "~/lib/equipment";

/** Every detail column may be left out when a row is made: a column a kind does not use stays empty (null). */
export class Equipment extends Model<InferAttributes<Equipment>, InferCreationAttributes<Equipment>> {
  declare id: CreationOptional<number>;
  declare kind: EquipmentKind;
  declare name: string;
  declare status: CreationOptional<EquipmentStatus>;
  declare maker: CreationOptional<string | null>;
  declare model: CreationOptional<string | null>;
  declare serialNumber: CreationOptional<string | null>;
  declare location: CreationOptional<string | null>;
  declare notes: CreationOptional<string | null>;
  declare diameterM: CreationOptional<number | null>;
  declare maxRateRpm: CreationOptional<number | null>;
  declare flatTable: CreationOptional<boolean | null>;
  declare rateTolerancePct: CreationOptional<number | null>;
  declare depthM: CreationOptional<number | null>;
  declare resolutionWidthPx: CreationOptional<number | null>;
  declare resolutionHeightPx: CreationOptional<number | null>;
  declare nominalFrameRateFps: CreationOptional<number | null>;
  /** camera: % a view setup's scale may differ from the scale calibration before a run is flagged */
  declare scaleTolerancePct: CreationOptional<number | null>;
  declare meterType: CreationOptional<string | null>;
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
