import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // One table for every kind of equipment; kind-specific columns stay empty for the other kinds,
  // so calibrations and bookings can point at any item with one foreign key.
  await qi.createTable("equipment", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    kind: { type: DataTypes.STRING(20), allowNull: false },
    name: { type: DataTypes.STRING(120), allowNull: false },
    status: { type: DataTypes.STRING(20), allowNull: false, defaultValue: "in_service" },
    maker: { type: DataTypes.STRING(120), allowNull: true },
    model: { type: DataTypes.STRING(120), allowNull: true },
    serial_number: { type: DataTypes.STRING(120), allowNull: true },
    location: { type: DataTypes.STRING(120), allowNull: true },
    notes: { type: DataTypes.TEXT, allowNull: true },
    diameter_m: { type: DataTypes.DOUBLE, allowNull: true },
    max_rate_rpm: { type: DataTypes.DOUBLE, allowNull: true },
    flat_table: { type: DataTypes.BOOLEAN, allowNull: true },
    rate_tolerance_pct: { type: DataTypes.DOUBLE, allowNull: true },
    depth_m: { type: DataTypes.DOUBLE, allowNull: true },
    resolution_width_px: { type: DataTypes.INTEGER, allowNull: true },
    resolution_height_px: { type: DataTypes.INTEGER, allowNull: true },
    nominal_frame_rate_fps: { type: DataTypes.DOUBLE, allowNull: true },
    meter_type: { type: DataTypes.STRING(40), allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("equipment", ["kind", "status"]);
  await qi.addIndex("equipment", ["name"]);
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable("equipment");
}
