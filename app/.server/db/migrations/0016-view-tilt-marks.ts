import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // A camera not quite overhead (Decision 69): five or more points on the tank's edge at the water's
  // surface, or four or more known points with their places on the table, as JSON; at most one of the two.
  await qi.addColumn("view_setups", "rim_points", { type: DataTypes.TEXT, allowNull: true });
  await qi.addColumn("view_setups", "known_points", { type: DataTypes.TEXT, allowNull: true });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeColumn("view_setups", "rim_points");
  await qi.removeColumn("view_setups", "known_points");
}
