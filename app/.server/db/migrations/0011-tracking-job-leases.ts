import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // With several worker processes on PostgreSQL a tracking job is held by one of them at a time:
  // the holder renews lease_until while it works, and a job whose lease ran out (its worker was
  // killed) is taken back and resumed by another. The in-process queue on SQLite leaves them empty.
  await qi.addColumn("tracking_jobs", "lease_owner", { type: DataTypes.STRING(80), allowNull: true });
  await qi.addColumn("tracking_jobs", "lease_until", { type: DataTypes.DATE, allowNull: true });
  await qi.addIndex("tracking_jobs", ["state", "lease_until"]);
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeIndex("tracking_jobs", ["state", "lease_until"]);
  await qi.removeColumn("tracking_jobs", "lease_until");
  await qi.removeColumn("tracking_jobs", "lease_owner");
}
