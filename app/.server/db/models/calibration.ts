import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import { sequelize } from "../connection";
import type { CalibrationKind } from "~/lib/calibrations";

export class Calibration extends Model<InferAttributes<Calibration>, InferCreationAttributes<Calibration>> {
  declare id: CreationOptional<number>;
  declare kind: CalibrationKind;
  declare equipmentId: number;
  declare meterId: number | null;
  declare performedById: number;
  declare performedAt: Date;
  declare dueAt: Date;
  declare notes: string | null;
  /** JSON [{setRpm, measuredRpm}] for a rate calibration. */
  declare readings: string | null;
  declare slope: number | null;
  declare interceptRpm: number | null;
  declare slopeStdError: number | null;
  declare interceptStdErrorRpm: number | null;
  declare slopeInterceptCovarianceRpm: number | null;
  declare meanSetRateRpm: number | null;
  declare residualSdRpm: number | null;
  declare maxResidualRpm: number | null;
  declare maxDeviationRpm: number | null;
  declare maxDeviationPct: number | null;
  declare tolerancePct: number | null;
  declare passed: boolean | null;
  declare knownLengthM: number | null;
  declare knownLengthUncertaintyM: number | null;
  declare lengthPx: number | null;
  declare lengthUncertaintyPx: number | null;
  declare scalePxPerM: number | null;
  declare scaleUncertaintyPxPerM: number | null;
  declare nominalFrameRateFps: number | null;
  declare frameIntervals: number | null;
  declare frameIntervalsUncertainty: number | null;
  declare referenceElapsedS: number | null;
  declare referenceElapsedUncertaintyS: number | null;
  declare trueFrameRateFps: number | null;
  declare trueFrameRateUncertaintyFps: number | null;
  declare frameRateDeviationPct: number | null;
  declare signedOffById: number | null;
  declare signedOffAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

// A fresh object per column: Sequelize writes the column name into each attribute definition.
const num = () => ({ type: DataTypes.DOUBLE, allowNull: true });

Calibration.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    kind: { type: DataTypes.STRING(10), allowNull: false },
    equipmentId: { type: DataTypes.INTEGER, allowNull: false },
    meterId: { type: DataTypes.INTEGER, allowNull: true },
    performedById: { type: DataTypes.INTEGER, allowNull: false },
    performedAt: { type: DataTypes.DATE, allowNull: false },
    dueAt: { type: DataTypes.DATE, allowNull: false },
    notes: { type: DataTypes.TEXT, allowNull: true },
    readings: { type: DataTypes.TEXT, allowNull: true },
    slope: num(),
    interceptRpm: num(),
    slopeStdError: num(),
    interceptStdErrorRpm: num(),
    slopeInterceptCovarianceRpm: num(),
    meanSetRateRpm: num(),
    residualSdRpm: num(),
    maxResidualRpm: num(),
    maxDeviationRpm: num(),
    maxDeviationPct: num(),
    tolerancePct: num(),
    passed: { type: DataTypes.BOOLEAN, allowNull: true },
    knownLengthM: num(),
    knownLengthUncertaintyM: num(),
    lengthPx: num(),
    lengthUncertaintyPx: num(),
    scalePxPerM: num(),
    scaleUncertaintyPxPerM: num(),
    nominalFrameRateFps: num(),
    frameIntervals: num(),
    frameIntervalsUncertainty: num(),
    referenceElapsedS: num(),
    referenceElapsedUncertaintyS: num(),
    trueFrameRateFps: num(),
    trueFrameRateUncertaintyFps: num(),
    frameRateDeviationPct: num(),
    signedOffById: { type: DataTypes.INTEGER, allowNull: true },
    signedOffAt: { type: DataTypes.DATE, allowNull: true },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  },
  { sequelize, tableName: "calibrations", underscored: true },
);

export class CalibrationAttachment extends Model<InferAttributes<CalibrationAttachment>, InferCreationAttributes<CalibrationAttachment>> {
  declare id: CreationOptional<number>;
  declare calibrationId: number;
  declare originalName: string;
  declare storedName: string;
  declare contentType: string;
  declare sizeBytes: number;
  declare sha256: string;
  declare uploadedById: number;
  declare createdAt: CreationOptional<Date>;
}

CalibrationAttachment.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    calibrationId: { type: DataTypes.INTEGER, allowNull: false },
    originalName: { type: DataTypes.STRING(255), allowNull: false },
    storedName: { type: DataTypes.STRING(100), allowNull: false },
    contentType: { type: DataTypes.STRING(60), allowNull: false },
    sizeBytes: { type: DataTypes.INTEGER, allowNull: false },
    sha256: { type: DataTypes.STRING(64), allowNull: false },
    uploadedById: { type: DataTypes.INTEGER, allowNull: false },
    createdAt: DataTypes.DATE,
  },
  { sequelize, tableName: "calibration_attachments", underscored: true, updatedAt: false },
);

/** One change to a calibration record: who, when, which field, old → new ("created", "attachment" and "signed off" too). */
export class CalibrationHistory extends Model<InferAttributes<CalibrationHistory>, InferCreationAttributes<CalibrationHistory>> {
  declare id: CreationOptional<number>;
  declare calibrationId: number;
  declare userId: number | null;
  declare field: string;
  declare oldValue: string | null;
  declare newValue: string | null;
  declare createdAt: CreationOptional<Date>;
}

CalibrationHistory.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    calibrationId: { type: DataTypes.INTEGER, allowNull: false },
    userId: { type: DataTypes.INTEGER, allowNull: true },
    field: { type: DataTypes.STRING(60), allowNull: false },
    oldValue: { type: DataTypes.TEXT, allowNull: true },
    newValue: { type: DataTypes.TEXT, allowNull: true },
    createdAt: DataTypes.DATE,
  },
  { sequelize, tableName: "calibration_history", underscored: true, updatedAt: false },
);
