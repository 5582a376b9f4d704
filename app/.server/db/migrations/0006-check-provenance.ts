import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // What a theory check was computed from, as one digest: a check whose inputs changed is out of date.
  await qi.addColumn("theory_checks", "input_fingerprint", { type: DataTypes.STRING(64), allowNull: true });
  // What a tracking job tracked (frames, view setup, tracer, frame times): its tracks belong to those.
  await qi.addColumn("tracking_jobs", "input_fingerprint", { type: DataTypes.STRING(64), allowNull: true });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeColumn("tracking_jobs", "input_fingerprint");
  await qi.removeColumn("theory_checks", "input_fingerprint");
}
