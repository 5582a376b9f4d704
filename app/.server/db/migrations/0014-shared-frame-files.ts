import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // A correction run starts with the frames of the run it corrects: its frame rows name the files
  // stored under that run (runs/<file run id>/<stored name>) instead of copies. Empty means the
  // frame's own run holds the file, as for every frame before this. The index finds every row that
  // still names a file before the file is removed.
  await qi.addColumn("frames", "file_run_id", { type: DataTypes.INTEGER, allowNull: true, references: { model: "runs", key: "id" }, onDelete: "RESTRICT" });
  await qi.addIndex("frames", ["file_run_id", "stored_name"]);
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeIndex("frames", ["file_run_id", "stored_name"]);
  await qi.removeColumn("frames", "file_run_id");
}
