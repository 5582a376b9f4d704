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
  // One table for the three kinds; the columns of the other kinds stay empty, as in equipment.
  await qi.createTable("calibrations", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    kind: { type: DataTypes.STRING(10), allowNull: false },
    equipment_id: ref("equipment", false),
    meter_id: ref("equipment"),
    performed_by_id: ref("users", false),
    performed_at: { type: DataTypes.DATE, allowNull: false },
    due_at: { type: DataTypes.DATE, allowNull: false },
    notes: { type: DataTypes.TEXT, allowNull: true },
    // rate: readings as JSON [{setRpm, measuredRpm}] and the fitted line measured = slope·set + intercept
    readings: { type: DataTypes.TEXT, allowNull: true },
    slope: { type: DataTypes.DOUBLE, allowNull: true },
    intercept_rpm: { type: DataTypes.DOUBLE, allowNull: true },
    slope_std_error: { type: DataTypes.DOUBLE, allowNull: true },
    intercept_std_error_rpm: { type: DataTypes.DOUBLE, allowNull: true },
    slope_intercept_covariance_rpm: { type: DataTypes.DOUBLE, allowNull: true },
    mean_set_rate_rpm: { type: DataTypes.DOUBLE, allowNull: true },
    residual_sd_rpm: { type: DataTypes.DOUBLE, allowNull: true },
    max_residual_rpm: { type: DataTypes.DOUBLE, allowNull: true },
    max_deviation_rpm: { type: DataTypes.DOUBLE, allowNull: true },
    max_deviation_pct: { type: DataTypes.DOUBLE, allowNull: true },
    tolerance_pct: { type: DataTypes.DOUBLE, allowNull: true },
    passed: { type: DataTypes.BOOLEAN, allowNull: true },
    // scale
    known_length_m: { type: DataTypes.DOUBLE, allowNull: true },
    known_length_uncertainty_m: { type: DataTypes.DOUBLE, allowNull: true },
    length_px: { type: DataTypes.DOUBLE, allowNull: true },
    length_uncertainty_px: { type: DataTypes.DOUBLE, allowNull: true },
    scale_px_per_m: { type: DataTypes.DOUBLE, allowNull: true },
    scale_uncertainty_px_per_m: { type: DataTypes.DOUBLE, allowNull: true },
    // timing
    nominal_frame_rate_fps: { type: DataTypes.DOUBLE, allowNull: true },
    frame_intervals: { type: DataTypes.DOUBLE, allowNull: true },
    frame_intervals_uncertainty: { type: DataTypes.DOUBLE, allowNull: true },
    reference_elapsed_s: { type: DataTypes.DOUBLE, allowNull: true },
    reference_elapsed_uncertainty_s: { type: DataTypes.DOUBLE, allowNull: true },
    true_frame_rate_fps: { type: DataTypes.DOUBLE, allowNull: true },
    true_frame_rate_uncertainty_fps: { type: DataTypes.DOUBLE, allowNull: true },
    frame_rate_deviation_pct: { type: DataTypes.DOUBLE, allowNull: true },
    signed_off_by_id: ref("users"),
    signed_off_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  });
  // "In force" looks up the latest signed record per item and kind; the due list sorts by due date.
  await qi.addIndex("calibrations", ["equipment_id", "kind", "signed_off_at"]);
  await qi.addIndex("calibrations", ["due_at"]);

  await qi.createTable("calibration_attachments", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    calibration_id: ref("calibrations", false, "CASCADE"),
    original_name: { type: DataTypes.STRING(255), allowNull: false },
    stored_name: { type: DataTypes.STRING(100), allowNull: false },
    content_type: { type: DataTypes.STRING(60), allowNull: false },
    size_bytes: { type: DataTypes.INTEGER, allowNull: false },
    sha256: { type: DataTypes.STRING(64), allowNull: false },
    uploaded_by_id: ref("users", false),
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("calibration_attachments", ["calibration_id"]);

  // Reminder bookkeeping lives beside the record, so a signed calibration row itself is never written again.
  await qi.createTable("calibration_reminders", {
    calibration_id: { ...ref("calibrations", false, "CASCADE"), primaryKey: true },
    state: { type: DataTypes.STRING(10), allowNull: false },
    claimed_at: { type: DataTypes.DATE, allowNull: false },
    sent_at: { type: DataTypes.DATE, allowNull: true },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    last_error: { type: DataTypes.TEXT, allowNull: true },
  });

  await qi.createTable("bookings", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    equipment_id: ref("equipment", false),
    requester_id: ref("users", false),
    state: { type: DataTypes.STRING(10), allowNull: false, defaultValue: "requested" },
    start_at: { type: DataTypes.DATE, allowNull: false },
    end_at: { type: DataTypes.DATE, allowNull: false },
    purpose: { type: DataTypes.STRING(300), allowNull: false },
    planned_rate_rpm: { type: DataTypes.DOUBLE, allowNull: true },
    planned_depth_m: { type: DataTypes.DOUBLE, allowNull: true },
    spin_up_lead_s: { type: DataTypes.DOUBLE, allowNull: true },
    decided_by_id: ref("users"),
    decided_at: { type: DataTypes.DATE, allowNull: true },
    decline_reason: { type: DataTypes.STRING(500), allowNull: true },
    cancelled_by_id: ref("users"),
    cancelled_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  });
  // The overlap check reads approved bookings of one item around a slot.
  await qi.addIndex("bookings", ["equipment_id", "state", "start_at"]);
  await qi.addIndex("bookings", ["requester_id", "start_at"]);
  await qi.addIndex("bookings", ["start_at"]);

  // A calendar app cannot sign in: each person may have one secret feed address (only its hash is kept).
  await qi.createTable("calendar_feeds", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    user_id: ref("users", false, "CASCADE"),
    token_hash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    token_prefix: { type: DataTypes.STRING(12), allowNull: false },
    last_used_at: { type: DataTypes.DATE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("calendar_feeds", ["user_id"], { unique: true });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.dropTable("calendar_feeds");
  await qi.dropTable("bookings");
  await qi.dropTable("calibration_reminders");
  await qi.dropTable("calibration_attachments");
  await qi.dropTable("calibrations");
}
