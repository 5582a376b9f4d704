import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // The mark on the turntable the technician marks once on the first frame (lab-fixed camera).
  await qi.addColumn("view_setups", "rate_mark_x_px", { type: DataTypes.DOUBLE, allowNull: true });
  await qi.addColumn("view_setups", "rate_mark_y_px", { type: DataTypes.DOUBLE, allowNull: true });
  // The table's rate read from the frames by the tracking job: signed rad/s, its standard error,
  // how it was read ("table mark" or "surroundings"), from how many frames, or why there is none.
  await qi.addColumn("tracking_jobs", "measured_omega", { type: DataTypes.DOUBLE, allowNull: true });
  await qi.addColumn("tracking_jobs", "measured_omega_se", { type: DataTypes.DOUBLE, allowNull: true });
  await qi.addColumn("tracking_jobs", "measured_omega_method", { type: DataTypes.STRING(20), allowNull: true });
  await qi.addColumn("tracking_jobs", "measured_omega_points", { type: DataTypes.INTEGER, allowNull: true });
  await qi.addColumn("tracking_jobs", "measured_omega_note", { type: DataTypes.TEXT, allowNull: true });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  for (const column of ["measured_omega", "measured_omega_se", "measured_omega_method", "measured_omega_points", "measured_omega_note"]) {
    await qi.removeColumn("tracking_jobs", column);
  }
  await qi.removeColumn("view_setups", "rate_mark_x_px");
  await qi.removeColumn("view_setups", "rate_mark_y_px");
}
