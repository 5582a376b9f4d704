import { DataTypes, type QueryInterface } from "sequelize";

const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
};
const ref = (model: string, allowNull = true, onDelete: "CASCADE" | "RESTRICT" | "SET NULL" = "RESTRICT") => ({
  type: DataTypes.INTEGER,
  allowNull,
  references: { model, key: "id" },
  onDelete,
});

export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable("runs", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    state: { type: DataTypes.STRING(20), allowNull: false, defaultValue: "draft" },
    table_id: ref("equipment", false),
    tank_id: ref("equipment", false),
    camera_id: ref("equipment", false),
    set_rate_rpm: { type: DataTypes.DOUBLE, allowNull: false },
    direction: { type: DataTypes.STRING(4), allowNull: false },
    water_depth_m: { type: DataTypes.DOUBLE, allowNull: false },
    water_temperature_c: { type: DataTypes.DOUBLE, allowNull: false },
    rate_reached_at: { type: DataTypes.DATE, allowNull: true },
    camera_mode: { type: DataTypes.STRING(10), allowNull: false },
    frame_rate_fps: { type: DataTypes.DOUBLE, allowNull: false },
    tracer: { type: DataTypes.STRING(10), allowNull: false },
    purpose: { type: DataTypes.STRING(300), allowNull: false },
    notes: { type: DataTypes.TEXT, allowNull: true },
    technician_id: ref("users", false),
    supersedes_id: ref("runs"),
    signed_off_by_id: ref("users"),
    signed_off_at: { type: DataTypes.DATE, allowNull: true },
    calibrations_in_force: { type: DataTypes.TEXT, allowNull: true },
    verdict: { type: DataTypes.STRING(15), allowNull: true },
    frame_count: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    frame_width_px: { type: DataTypes.INTEGER, allowNull: true },
    frame_height_px: { type: DataTypes.INTEGER, allowNull: true },
    ...timestamps,
  });
  // The runs table filters and sorts on these; each index serves a filter plus the default order.
  await qi.addIndex("runs", ["created_at"]);
  await qi.addIndex("runs", ["state", "created_at"]);
  await qi.addIndex("runs", ["verdict", "created_at"]);
  await qi.addIndex("runs", ["table_id", "created_at"]);
  await qi.addIndex("runs", ["technician_id", "created_at"]);
  await qi.addIndex("runs", ["supersedes_id"]);

  await qi.createTable("frames", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    run_id: ref("runs", false, "CASCADE"),
    position: { type: DataTypes.INTEGER, allowNull: false },
    original_name: { type: DataTypes.STRING(255), allowNull: false },
    stored_name: { type: DataTypes.STRING(100), allowNull: false },
    thumb_name: { type: DataTypes.STRING(100), allowNull: true },
    sha256: { type: DataTypes.STRING(64), allowNull: false },
    format: { type: DataTypes.STRING(10), allowNull: false },
    width_px: { type: DataTypes.INTEGER, allowNull: false },
    height_px: { type: DataTypes.INTEGER, allowNull: false },
    size_bytes: { type: DataTypes.INTEGER, allowNull: false },
    time_s: { type: DataTypes.DOUBLE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("frames", ["run_id", "sha256"], { unique: true });
  await qi.addIndex("frames", ["run_id", "position"]);

  await qi.createTable("view_setups", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    run_id: ref("runs", false, "CASCADE"),
    camera_id: ref("equipment", false),
    centre_x_px: { type: DataTypes.DOUBLE, allowNull: false },
    centre_y_px: { type: DataTypes.DOUBLE, allowNull: false },
    tank_edge_x_px: { type: DataTypes.DOUBLE, allowNull: true },
    tank_edge_y_px: { type: DataTypes.DOUBLE, allowNull: true },
    tank_edge_r_px: { type: DataTypes.DOUBLE, allowNull: true },
    scale_px_per_m: { type: DataTypes.DOUBLE, allowNull: true },
    scale_points: { type: DataTypes.TEXT, allowNull: true },
    mirrored: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    created_by_id: ref("users", false),
    ...timestamps,
  });
  await qi.addIndex("view_setups", ["run_id"], { unique: true });
  await qi.addIndex("view_setups", ["camera_id", "updated_at"]);

  await qi.createTable("tracking_jobs", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    run_id: ref("runs", false, "CASCADE"),
    state: { type: DataTypes.STRING(12), allowNull: false, defaultValue: "queued" },
    frames_done: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    frames_total: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    error: { type: DataTypes.TEXT, allowNull: true },
    requested_by_id: ref("users", false),
    started_at: { type: DataTypes.DATE, allowNull: true },
    finished_at: { type: DataTypes.DATE, allowNull: true },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    // Every frame before this one has its detections stored: a restarted job searches from here.
    resume_from_frame: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    ...timestamps,
  });
  await qi.addIndex("tracking_jobs", ["state"]);
  await qi.addIndex("tracking_jobs", ["run_id", "created_at"]);

  await qi.createTable("tracks", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    run_id: ref("runs", false, "CASCADE"),
    job_id: ref("tracking_jobs", false, "CASCADE"),
    number: { type: DataTypes.INTEGER, allowNull: false },
    points: { type: DataTypes.TEXT, allowNull: false },
    point_count: { type: DataTypes.INTEGER, allowNull: false },
    detected_share: { type: DataTypes.DOUBLE, allowNull: true },
    jitter_px: { type: DataTypes.DOUBLE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("tracks", ["run_id"]);

  await qi.createTable("detections", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    job_id: ref("tracking_jobs", false, "CASCADE"),
    frame_index: { type: DataTypes.INTEGER, allowNull: false },
    time_s: { type: DataTypes.DOUBLE, allowNull: false },
    x_px: { type: DataTypes.DOUBLE, allowNull: false },
    y_px: { type: DataTypes.DOUBLE, allowNull: false },
    area_px: { type: DataTypes.DOUBLE, allowNull: true },
    roundness: { type: DataTypes.DOUBLE, allowNull: true },
  });
  await qi.addIndex("detections", ["job_id", "frame_index"]);

  await qi.createTable("theory_checks", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    run_id: ref("runs", false, "CASCADE"),
    track_id: ref("tracks", true, "SET NULL"),
    verdict: { type: DataTypes.STRING(15), allowNull: false },
    f_measured_per_s: { type: DataTypes.DOUBLE, allowNull: true },
    f_predicted_per_s: { type: DataTypes.DOUBLE, allowNull: true },
    result: { type: DataTypes.TEXT, allowNull: false },
    code_version: { type: DataTypes.STRING(40), allowNull: false },
    created_by_id: ref("users"),
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("theory_checks", ["run_id", "created_at"]);

  await qi.createTable("run_history", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    run_id: ref("runs", false, "CASCADE"),
    user_id: ref("users"),
    field: { type: DataTypes.STRING(60), allowNull: false },
    old_value: { type: DataTypes.TEXT, allowNull: true },
    new_value: { type: DataTypes.TEXT, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("run_history", ["run_id", "created_at"]);
}

export async function down({ context: qi }: { context: QueryInterface }) {
  for (const t of ["run_history", "theory_checks", "detections", "tracks", "tracking_jobs", "view_setups", "frames", "runs"]) {
    await qi.dropTable(t);
  }
}
