import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // The tracer found in a frame as it arrived, before the run's tracking job: keyed by the frame's
  // content (sha256) and the basis it was searched on (the plan, the still background's sampled
  // frames, the code version), so the job takes a row only when it would have searched the same
  // frame the same way. JSON of the detector's detections, full precision.
  await qi.createTable("streamed_detections", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    run_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: "runs", key: "id" }, onDelete: "CASCADE" },
    sha256: { type: DataTypes.STRING(64), allowNull: false },
    basis: { type: DataTypes.STRING(64), allowNull: false },
    detections: { type: DataTypes.TEXT, allowNull: false },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("streamed_detections", ["run_id", "basis", "sha256"], { unique: true, name: "streamed_detections_run_basis_sha" });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable("streamed_detections");
}
