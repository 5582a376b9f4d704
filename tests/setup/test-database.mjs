// The database a browser test's server runs on: a SQLite file in the test's folder, or, when
// TEST_DATABASE_URL names a PostgreSQL server (npm run test:pg sets it), a database created afresh
// on that server. Also the few raw reads the crash test makes of that database after a kill.
import path from "node:path";
import pg from "pg";
import sqlite3 from "sqlite3";

const serverUrl = process.env.TEST_DATABASE_URL;
export const onPostgres = Boolean(serverUrl && /^postgres(ql)?:\/\//.test(serverUrl));

/** A fresh, empty database for `label` (a-z, 0-9, _): a new PostgreSQL database, or `<dir>/<label>.sqlite`. */
export async function freshDatabaseUrl(label, dir) {
  if (!/^[a-z0-9_]+$/.test(label)) throw new Error(`bad database label ${label}`);
  if (!onPostgres) return `sqlite:${path.join(dir, `${label}.sqlite`)}`;
  const name = `tankside_${label}`;
  const admin = new pg.Client({ connectionString: serverUrl });
  await admin.connect();
  try {
    await admin.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
    await admin.query(`CREATE DATABASE ${name}`);
  } finally {
    await admin.end();
  }
  const url = new URL(serverUrl);
  url.pathname = `/${name}`;
  return url.toString();
}

/** Rows of one query against the database at `url` (sqlite:… or postgres://…). */
export async function queryAll(url, sql) {
  if (url.startsWith("sqlite:")) {
    const file = url.replace(/^sqlite:(\/\/)?/, "");
    return new Promise((resolve, reject) => {
      const db = new sqlite3.Database(file, (err) => {
        if (err) return reject(err);
        db.all(sql, (queryErr, rows) => db.close(() => (queryErr ? reject(queryErr) : resolve(rows))));
      });
    });
  }
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    return (await client.query(sql)).rows;
  } finally {
    await client.end();
  }
}

/**
 * The database's own consistency check: SQLite's integrity_check, or on PostgreSQL amcheck's
 * bt_index_check over every B-tree index of the schema (heap and index agree). ["ok"] when sound.
 */
export async function integrityCheck(url) {
  if (url.startsWith("sqlite:")) return (await queryAll(url, "PRAGMA integrity_check")).map((r) => r.integrity_check);
  await queryAll(url, "CREATE EXTENSION IF NOT EXISTS amcheck");
  const indexes = await queryAll(
    url,
    "SELECT c.oid::regclass::text AS name FROM pg_index i JOIN pg_class c ON c.oid = i.indexrelid JOIN pg_am a ON a.oid = c.relam JOIN pg_namespace n ON n.oid = c.relnamespace WHERE a.amname = 'btree' AND n.nspname = 'public'",
  );
  const problems = [];
  for (const { name } of indexes) {
    try {
      await queryAll(url, `SELECT bt_index_check('${name}'::regclass, true)`);
    } catch (err) {
      problems.push(`${name}: ${err.message}`);
    }
  }
  return problems.length ? problems : ["ok"];
}
