import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // A camera's scale tolerance: how far (in % of the scale calibration) a run's view setup may
  // differ before the run is flagged. Copied into each scale calibration when it is recorded, as
  // the table's rate tolerance is into its rate calibrations.
  await qi.addColumn("equipment", "scale_tolerance_pct", { type: DataTypes.DOUBLE, allowNull: true });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeColumn("equipment", "scale_tolerance_pct");
}
