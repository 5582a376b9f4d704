import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import { sequelize } from "../connection";

export class Frame extends Model<InferAttributes<Frame>, InferCreationAttributes<Frame>> {
  declare id: CreationOptional<number>;
  declare runId: number;
  /** The run whose folder holds the file, when it is not this run (a correction shares the frames of the run it corrects). */
  declare fileRunId: CreationOptional<number | null>;
  declare position: number;
  declare originalName: string;
  declare storedName: string;
  declare thumbName: string | null;
  declare sha256: string;
  declare format: string;
  declare widthPx: number;
  declare heightPx: number;
  declare sizeBytes: number;
  declare timeS: number | null;
  declare createdAt: CreationOptional<Date>;
}
Frame.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    runId: { type: DataTypes.INTEGER, allowNull: false },
    fileRunId: { type: DataTypes.INTEGER, allowNull: true },
    position: { type: DataTypes.INTEGER, allowNull: false },
    originalName: { type: DataTypes.STRING(255), allowNull: false },
    storedName: { type: DataTypes.STRING(100), allowNull: false },
    thumbName: { type: DataTypes.STRING(100), allowNull: true },
    sha256: { type: DataTypes.STRING(64), allowNull: false },
    format: { type: DataTypes.STRING(10), allowNull: false },
    widthPx: { type: DataTypes.INTEGER, allowNull: false },
    heightPx: { type: DataTypes.INTEGER, allowNull: false },
    sizeBytes: { type: DataTypes.INTEGER, allowNull: false },
    timeS: { type: DataTypes.DOUBLE, allowNull: true },
    createdAt: DataTypes.DATE,
  },
  { sequelize, tableName: "frames", underscored: true, updatedAt: false },
);

export class ViewSetup extends Model<InferAttributes<ViewSetup>, InferCreationAttributes<ViewSetup>> {
  declare id: CreationOptional<number>;
  declare runId: number;
  declare cameraId: number;
  declare centreXPx: number;
  declare centreYPx: number;
  declare tankEdgeXPx: number | null;
  declare tankEdgeYPx: number | null;
  declare tankEdgeRPx: number | null;
  declare scalePxPerM: number | null;
  declare scalePoints: string | null;
  declare mirrored: boolean;
  /** A mark on the turntable on the first frame, image px: the rate is read from it (lab-fixed camera). */
  declare rateMarkXPx: CreationOptional<number | null>;
  declare rateMarkYPx: CreationOptional<number | null>;
  /** A camera not quite overhead (migration 0016): rim points [{x, y}] or known points [{x, y, tableXCm, tableYCm}] as JSON, image px and cm. */
  declare rimPoints: CreationOptional<string | null>;
  declare knownPoints: CreationOptional<string | null>;
  declare createdById: number;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
ViewSetup.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    runId: { type: DataTypes.INTEGER, allowNull: false },
    cameraId: { type: DataTypes.INTEGER, allowNull: false },
    centreXPx: { type: DataTypes.DOUBLE, allowNull: false, field: "centre_x_px" },
    centreYPx: { type: DataTypes.DOUBLE, allowNull: false, field: "centre_y_px" },
    tankEdgeXPx: { type: DataTypes.DOUBLE, allowNull: true, field: "tank_edge_x_px" },
    tankEdgeYPx: { type: DataTypes.DOUBLE, allowNull: true, field: "tank_edge_y_px" },
    tankEdgeRPx: { type: DataTypes.DOUBLE, allowNull: true, field: "tank_edge_r_px" },
    scalePxPerM: { type: DataTypes.DOUBLE, allowNull: true, field: "scale_px_per_m" },
    scalePoints: { type: DataTypes.TEXT, allowNull: true },
    mirrored: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    rateMarkXPx: { type: DataTypes.DOUBLE, allowNull: true, field: "rate_mark_x_px" },
    rateMarkYPx: { type: DataTypes.DOUBLE, allowNull: true, field: "rate_mark_y_px" },
    rimPoints: { type: DataTypes.TEXT, allowNull: true, field: "rim_points" },
    knownPoints: { type: DataTypes.TEXT, allowNull: true, field: "known_points" },
    createdById: { type: DataTypes.INTEGER, allowNull: false },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  },
  { sequelize, tableName: "view_setups", underscored: true },
);

export type JobState = "queued" | "running" | "done" | "failed" | "cancelled";

export class TrackingJob extends Model<InferAttributes<TrackingJob>, InferCreationAttributes<TrackingJob>> {
  declare id: CreationOptional<number>;
  declare runId: number;
  declare state: CreationOptional<JobState>;
  declare framesDone: CreationOptional<number>;
  declare framesTotal: CreationOptional<number>;
  declare error: string | null;
  declare requestedById: number;
  declare startedAt: Date | null;
  declare finishedAt: Date | null;
  declare attempts: CreationOptional<number>;
  declare resumeFromFrame: CreationOptional<number>;
  /** sha256 of what was tracked (frames, view setup, tracer, frame times). */
  declare inputFingerprint: CreationOptional<string | null>;
  /** PostgreSQL: the worker holding the job, and until when without a heartbeat. */
  declare leaseOwner: CreationOptional<string | null>;
  declare leaseUntil: CreationOptional<Date | null>;
  /** The table's rate read from the frames (migration 0013): signed rad/s and its standard error. */
  declare measuredOmega: CreationOptional<number | null>;
  declare measuredOmegaSe: CreationOptional<number | null>;
  /** "table mark" or "surroundings" */
  declare measuredOmegaMethod: CreationOptional<string | null>;
  declare measuredOmegaPoints: CreationOptional<number | null>;
  /** Why no rate was read, in words. */
  declare measuredOmegaNote: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
TrackingJob.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    runId: { type: DataTypes.INTEGER, allowNull: false },
    state: { type: DataTypes.STRING(12), allowNull: false, defaultValue: "queued" },
    framesDone: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    framesTotal: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    error: { type: DataTypes.TEXT, allowNull: true },
    requestedById: { type: DataTypes.INTEGER, allowNull: false },
    startedAt: { type: DataTypes.DATE, allowNull: true },
    finishedAt: { type: DataTypes.DATE, allowNull: true },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    resumeFromFrame: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    inputFingerprint: { type: DataTypes.STRING(64), allowNull: true },
    leaseOwner: { type: DataTypes.STRING(80), allowNull: true },
    leaseUntil: { type: DataTypes.DATE, allowNull: true },
    measuredOmega: { type: DataTypes.DOUBLE, allowNull: true },
    measuredOmegaSe: { type: DataTypes.DOUBLE, allowNull: true },
    measuredOmegaMethod: { type: DataTypes.STRING(20), allowNull: true },
    measuredOmegaPoints: { type: DataTypes.INTEGER, allowNull: true },
    measuredOmegaNote: { type: DataTypes.TEXT, allowNull: true },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  },
  { sequelize, tableName: "tracking_jobs", underscored: true },
);

export class Track extends Model<InferAttributes<Track>, InferCreationAttributes<Track>> {
  declare id: CreationOptional<number>;
  declare runId: number;
  declare jobId: number;
  declare number: number;
  /** JSON array of [t_s, x_px, y_px, frameIndex]. */
  declare points: string;
  declare pointCount: number;
  declare detectedShare: number | null;
  declare jitterPx: number | null;
  declare createdAt: CreationOptional<Date>;
}
Track.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    runId: { type: DataTypes.INTEGER, allowNull: false },
    jobId: { type: DataTypes.INTEGER, allowNull: false },
    number: { type: DataTypes.INTEGER, allowNull: false },
    points: { type: DataTypes.TEXT, allowNull: false },
    pointCount: { type: DataTypes.INTEGER, allowNull: false },
    detectedShare: { type: DataTypes.DOUBLE, allowNull: true },
    jitterPx: { type: DataTypes.DOUBLE, allowNull: true },
    createdAt: DataTypes.DATE,
  },
  { sequelize, tableName: "tracks", underscored: true, updatedAt: false },
);

export class Detection extends Model<InferAttributes<Detection>, InferCreationAttributes<Detection>> {
  declare id: CreationOptional<number>;
  declare jobId: number;
  declare frameIndex: number;
  declare timeS: number;
  declare xPx: number;
  declare yPx: number;
  declare areaPx: number | null;
  declare roundness: number | null;
}
Detection.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    jobId: { type: DataTypes.INTEGER, allowNull: false },
    frameIndex: { type: DataTypes.INTEGER, allowNull: false },
    timeS: { type: DataTypes.DOUBLE, allowNull: false },
    xPx: { type: DataTypes.DOUBLE, allowNull: false, field: "x_px" },
    yPx: { type: DataTypes.DOUBLE, allowNull: false, field: "y_px" },
    areaPx: { type: DataTypes.DOUBLE, allowNull: true },
    roundness: { type: DataTypes.DOUBLE, allowNull: true },
  },
  { sequelize, tableName: "detections", underscored: true, timestamps: false },
);

/** The tracer found in one frame as it arrived (migration 0015; app/.server/jobs/frame-stream.ts). */
export class StreamedDetection extends Model<InferAttributes<StreamedDetection>, InferCreationAttributes<StreamedDetection>> {
  declare id: CreationOptional<number>;
  declare runId: number;
  declare sha256: string;
  declare basis: string;
  /** JSON array of the detector's detections in the frame. */
  declare detections: string;
  declare createdAt: CreationOptional<Date>;
}
StreamedDetection.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    runId: { type: DataTypes.INTEGER, allowNull: false },
    sha256: { type: DataTypes.STRING(64), allowNull: false },
    basis: { type: DataTypes.STRING(64), allowNull: false },
    detections: { type: DataTypes.TEXT, allowNull: false },
    createdAt: DataTypes.DATE,
  },
  { sequelize, tableName: "streamed_detections", underscored: true, updatedAt: false },
);

export class TheoryCheck extends Model<InferAttributes<TheoryCheck>, InferCreationAttributes<TheoryCheck>> {
  declare id: CreationOptional<number>;
  declare runId: number;
  declare trackId: number | null;
  declare verdict: "agrees" | "disagrees" | "inconclusive";
  declare fMeasuredPerS: number | null;
  declare fPredictedPerS: number | null;
  /** JSON: the whole result, with the inputs and settings needed to reproduce it. */
  declare result: string;
  declare codeVersion: string;
  declare createdById: number | null;
  /** sha256 of the canonical inputs the check was computed from; null when they could not be vouched for. */
  declare inputFingerprint: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;
}
TheoryCheck.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    runId: { type: DataTypes.INTEGER, allowNull: false },
    trackId: { type: DataTypes.INTEGER, allowNull: true },
    verdict: { type: DataTypes.STRING(15), allowNull: false },
    fMeasuredPerS: { type: DataTypes.DOUBLE, allowNull: true, field: "f_measured_per_s" },
    fPredictedPerS: { type: DataTypes.DOUBLE, allowNull: true, field: "f_predicted_per_s" },
    result: { type: DataTypes.TEXT, allowNull: false },
    codeVersion: { type: DataTypes.STRING(40), allowNull: false },
    createdById: { type: DataTypes.INTEGER, allowNull: true },
    inputFingerprint: { type: DataTypes.STRING(64), allowNull: true },
    createdAt: DataTypes.DATE,
  },
  { sequelize, tableName: "theory_checks", underscored: true, updatedAt: false },
);

export class RunHistory extends Model<InferAttributes<RunHistory>, InferCreationAttributes<RunHistory>> {
  declare id: CreationOptional<number>;
  declare runId: number;
  declare userId: number | null;
  declare field: string;
  declare oldValue: string | null;
  declare newValue: string | null;
  declare createdAt: CreationOptional<Date>;
}
RunHistory.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    runId: { type: DataTypes.INTEGER, allowNull: false },
    userId: { type: DataTypes.INTEGER, allowNull: true },
    field: { type: DataTypes.STRING(60), allowNull: false },
    oldValue: { type: DataTypes.TEXT, allowNull: true },
    newValue: { type: DataTypes.TEXT, allowNull: true },
    createdAt: DataTypes.DATE,
  },
  { sequelize, tableName: "run_history", underscored: true, updatedAt: false },
);
