import { DataTypes, type QueryInterface } from "sequelize";

export async function up({ context: qi }: { context: QueryInterface }) {
  // Every e-mail is first a row here, written in the transaction of the change that causes it; the
  // sender in the server process delivers due rows under a lease and records the outcome.
  await qi.createTable("mail_outbox", {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    recipients: { type: DataTypes.TEXT, allowNull: false },
    subject: { type: DataTypes.STRING(500), allowNull: false },
    text_body: { type: DataTypes.TEXT, allowNull: false },
    html_body: { type: DataTypes.TEXT, allowNull: true },
    state: { type: DataTypes.STRING(10), allowNull: false, defaultValue: "queued" },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    next_attempt_at: { type: DataTypes.DATE, allowNull: false },
    lease_owner: { type: DataTypes.STRING(64), allowNull: true },
    lease_until: { type: DataTypes.DATE, allowNull: true },
    last_error: { type: DataTypes.TEXT, allowNull: true },
    sent_at: { type: DataTypes.DATE, allowNull: true },
    // Mail that must be enqueued at most once (a calibration's reminder) carries a key; NULLs do not collide.
    dedupe_key: { type: DataTypes.STRING(120), allowNull: true, unique: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await qi.addIndex("mail_outbox", ["state", "next_attempt_at"]);

  // The reminders' own "sent once" claims move into the outbox: a reminder already sent keeps its key
  // (so it is not enqueued again); failed or unfinished ones were not delivered and are enqueued anew.
  await qi.sequelize.query(
    `INSERT INTO mail_outbox (recipients, subject, text_body, html_body, state, attempts, next_attempt_at, lease_owner, lease_until, last_error, sent_at, dedupe_key, created_at, updated_at)
     SELECT '', 'Calibration reminder (sent before the outbox)', '', NULL, 'sent', attempts, COALESCE(sent_at, claimed_at), NULL, NULL, NULL, sent_at,
            'calibration-reminder:' || calibration_id, claimed_at, COALESCE(sent_at, claimed_at)
     FROM calibration_reminders WHERE state = 'sent'`,
  );
  await qi.dropTable("calibration_reminders");
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.createTable("calibration_reminders", {
    calibration_id: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: "calibrations", key: "id" }, onDelete: "CASCADE" },
    state: { type: DataTypes.STRING(10), allowNull: false },
    claimed_at: { type: DataTypes.DATE, allowNull: false },
    sent_at: { type: DataTypes.DATE, allowNull: true },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    last_error: { type: DataTypes.TEXT, allowNull: true },
  });
  await qi.dropTable("mail_outbox");
}
