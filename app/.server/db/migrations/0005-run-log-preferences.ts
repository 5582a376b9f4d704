import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // Per-person settings of the app's views (the runs table's column choice first), one JSON value per key.
  await qi.createTable("user_preferences", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    user_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: "users", key: "id" }, onDelete: "CASCADE" },
    key: { type: DataTypes.STRING(60), allowNull: false },
    value: { type: DataTypes.TEXT, allowNull: false },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("user_preferences", ["user_id", "key"], { unique: true });
  // The dashboard asks for recent disagreeing verdicts and the queues by state, newest change first.
  await qi.addIndex("runs", ["state", "updated_at"]);
  await qi.addIndex("runs", ["verdict", "updated_at"]);
  // Two filters together (a table's runs in one state) are the table's commonest shared link.
  await qi.addIndex("runs", ["table_id", "state", "created_at"]);
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeIndex("runs", ["table_id", "state", "created_at"]);
  await qi.removeIndex("runs", ["verdict", "updated_at"]);
  await qi.removeIndex("runs", ["state", "updated_at"]);
  await qi.dropTable("user_preferences");
}
