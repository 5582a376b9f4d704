import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // Every change to a calibration record (made, edited, a file attached, signed off), like run_history.
  await qi.createTable("calibration_history", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    calibration_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: "calibrations", key: "id" }, onDelete: "CASCADE" },
    user_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: "users", key: "id" } },
    field: { type: DataTypes.STRING(60), allowNull: false },
    old_value: { type: DataTypes.TEXT, allowNull: true },
    new_value: { type: DataTypes.TEXT, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("calibration_history", ["calibration_id", "created_at"]);
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable("calibration_history");
}
