import { afterAll, describe, expect, it } from "vitest";
import { QueryTypes, type Transaction } from "sequelize";
import { sequelize } from "./connection";

async function settings(transaction?: Transaction) {
  const read = async (pragma: string) => Object.values((await sequelize.query<Record<string, unknown>>(`PRAGMA ${pragma}`, { type: QueryTypes.SELECT, transaction }))[0])[0];
  return {
    journal_mode: await read("journal_mode"),
    busy_timeout: await read("busy_timeout"),
    synchronous: await read("synchronous"),
    foreign_keys: await read("foreign_keys"),
  };
}

// SQLite's PRAGMA documentation (sqlite.org/pragma.html): synchronous 1 is NORMAL; busy_timeout is in ms.
const intended = { journal_mode: "wal", busy_timeout: 10_000, synchronous: 1, foreign_keys: 1 };

afterAll(() => sequelize.close());

describe("SQLite connection settings", () => {
  it("the shared connection runs in WAL with a 10 s busy timeout, synchronous=NORMAL and foreign keys on", async () => {
    expect(await settings()).toEqual(intended);
  });

  it("so does the connection a transaction opens for itself", async () => {
    await sequelize.transaction(async (t) => {
      expect(await settings(t)).toEqual(intended);
    });
  });
});
