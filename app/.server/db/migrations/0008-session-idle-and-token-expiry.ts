import { DataTypes, Op, type QueryInterface } from "sequelize";

/** Dates as Sequelize writes them to SQLite; the query interface would store a bare Date as a number. */
const sqliteDate = (d: Date) => d.toISOString().replace("T", " ").replace("Z", " +00:00");

export async function up({ context: qi }: { context: QueryInterface }) {
  // When a session last answered a request: the idle timeout is measured from here.
  await qi.addColumn("sessions", "last_seen_at", { type: DataTypes.DATE, allowNull: true });
  await qi.bulkUpdate("sessions", { last_seen_at: sqliteDate(new Date()) }, { last_seen_at: { [Op.is]: null } });
  // API tokens now expire; those made before this change get the default 90 days from today.
  await qi.addColumn("api_tokens", "expires_at", { type: DataTypes.DATE, allowNull: true });
  await qi.bulkUpdate("api_tokens", { expires_at: sqliteDate(new Date(Date.now() + 90 * 24 * 3600 * 1000)) }, { expires_at: { [Op.is]: null } });
  // Why a token stopped working, shown to its owner: "revoked", "password_changed", "deactivated".
  await qi.addColumn("api_tokens", "revoked_reason", { type: DataTypes.STRING(30), allowNull: true });
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.removeColumn("api_tokens", "revoked_reason");
  await qi.removeColumn("api_tokens", "expires_at");
  await qi.removeColumn("sessions", "last_seen_at");
}
