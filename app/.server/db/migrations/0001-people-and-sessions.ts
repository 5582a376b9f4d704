import { DataTypes, type QueryInterface } from "sequelize";

const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
};

export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable("users", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    // Stored lower-cased, so the unique index is case-insensitive on every dialect.
    email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(120), allowNull: false },
    role: { type: DataTypes.STRING(20), allowNull: false },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    password_hash: { type: DataTypes.STRING(255), allowNull: true },
    password_changed_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  });

  await qi.createTable("sessions", {
    id: { type: DataTypes.STRING(64), primaryKey: true },
    user_id: {
      type: DataTypes.INTEGER,
      allowNull: true,
      references: { model: "users", key: "id" },
      onDelete: "CASCADE",
    },
    data: { type: DataTypes.TEXT, allowNull: false, defaultValue: "{}" },
    expires_at: { type: DataTypes.DATE, allowNull: false },
    ...timestamps,
  });
  await qi.addIndex("sessions", ["user_id"]);
  await qi.addIndex("sessions", ["expires_at"]);

  await qi.createTable("auth_tokens", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    user_id: {
      type: DataTypes.INTEGER,
      allowNull: false,
      references: { model: "users", key: "id" },
      onDelete: "CASCADE",
    },
    purpose: { type: DataTypes.STRING(20), allowNull: false },
    token_hash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    expires_at: { type: DataTypes.DATE, allowNull: false },
    used_at: { type: DataTypes.DATE, allowNull: true },
    created_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: "users", key: "id" } },
    ...timestamps,
  });
  await qi.addIndex("auth_tokens", ["user_id", "purpose"]);

  await qi.createTable("api_tokens", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    user_id: {
      type: DataTypes.INTEGER,
      allowNull: false,
      references: { model: "users", key: "id" },
      onDelete: "CASCADE",
    },
    label: { type: DataTypes.STRING(80), allowNull: false },
    token_hash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    token_prefix: { type: DataTypes.STRING(16), allowNull: false },
    last_used_at: { type: DataTypes.DATE, allowNull: true },
    revoked_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  });
  await qi.addIndex("api_tokens", ["user_id"]);

  await qi.createTable("captured_mail", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    message_id: { type: DataTypes.STRING(255), allowNull: true },
    envelope_from: { type: DataTypes.STRING(254), allowNull: true },
    envelope_to: { type: DataTypes.TEXT, allowNull: false },
    subject: { type: DataTypes.STRING(500), allowNull: false, defaultValue: "" },
    text_body: { type: DataTypes.TEXT, allowNull: false, defaultValue: "" },
    html_body: { type: DataTypes.TEXT, allowNull: true },
    received_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("captured_mail", ["received_at"]);

  await qi.createTable("mail_log", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    recipients: { type: DataTypes.TEXT, allowNull: false },
    subject: { type: DataTypes.STRING(500), allowNull: false },
    status: { type: DataTypes.STRING(10), allowNull: false },
    error: { type: DataTypes.TEXT, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });

  await qi.createTable("lab_settings", {
    key: { type: DataTypes.STRING(80), primaryKey: true },
    value: { type: DataTypes.TEXT, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  for (const table of ["lab_settings", "mail_log", "captured_mail", "api_tokens", "auth_tokens", "sessions", "users"]) {
    await qi.dropTable(table);
  }
}
