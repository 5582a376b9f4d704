import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DataTypes, type Model, type ModelStatic } from "sequelize";
import { isSqlite, sequelize } from "./connection";
import { OutsideTransactionError, isRetryable } from "./transaction-scope";

let Probe: ModelStatic<Model<{ id?: number; label: string }>>;

beforeAll(async () => {
  Probe = sequelize.define("ScopeProbe", { label: { type: DataTypes.STRING, allowNull: false } }, { tableName: "scope_probe" });
  await Probe.sync();
});

afterAll(() => sequelize.close());

/** A promise and the function that settles it. */
function gate() {
  let open!: () => void;
  const opened = new Promise<void>((resolve) => (open = resolve));
  return { opened, open };
}

const labels = async () => (await Probe.findAll({ order: [["id", "ASC"]] })).map((p) => p.get("label") as string);

describe("inside a transaction's callback, every query passes the transaction (both databases)", () => {
  it("a transaction started inside another's callback fails at once", async () => {
    const nested = sequelize.transaction(async () => {
      await sequelize.transaction(async () => undefined);
    });
    await expect(nested).rejects.toBeInstanceOf(OutsideTransactionError);
  });

  it("a write or a read without { transaction } fails at once; with it, and in a savepoint, they work", async () => {
    await Probe.destroy({ where: {} });
    await sequelize.transaction(async (transaction) => {
      await expect(Probe.create({ label: "forgot the transaction" })).rejects.toBeInstanceOf(OutsideTransactionError);
      await expect(Probe.count()).rejects.toBeInstanceOf(OutsideTransactionError);
      await Probe.create({ label: "kept" }, { transaction });
      expect(await Probe.count({ transaction })).toBe(1);
      await sequelize.transaction({ transaction }, async (savepoint) => {
        await Probe.create({ label: "in savepoint" }, { transaction: savepoint });
      });
    });
    expect(await labels()).toEqual(["kept", "in savepoint"]);
  });

  it("work started in a callback that writes after the commit runs on its own, outside the finished transaction, and takes its own turn in the write queue", async () => {
    await Probe.destroy({ where: {} });
    const started = gate();
    let later: Promise<unknown> = Promise.resolve();
    await sequelize.transaction(async (transaction) => {
      await Probe.create({ label: "first" }, { transaction });
      later = started.opened.then(() => Probe.create({ label: "after commit" }));
    });
    started.open();
    await later;
    expect(await labels()).toEqual(["first", "after commit"]);
  });

  it("30 transactions at once, each reading and writing several times, all commit (none waits for a second connection)", async () => {
    await Probe.destroy({ where: {} });
    await Promise.all(
      Array.from({ length: 30 }, (_, i) =>
        sequelize.transaction(async (transaction) => {
          await Probe.create({ label: `t${i}` }, { transaction });
          await Probe.count({ transaction });
          await Probe.update({ label: `t${i} done` }, { where: { label: `t${i}` }, transaction });
        }),
      ),
    );
    expect((await labels()).filter((l) => l.endsWith(" done"))).toHaveLength(30);
  });
});

describe("deadlocks (PostgreSQL)", () => {
  it("tells a deadlock or serialization failure from other errors", () => {
    expect(isRetryable({ parent: { code: "40P01" } })).toBe(true);
    expect(isRetryable({ parent: { code: "40001" } })).toBe(true);
    expect(isRetryable({ parent: { code: "23505" } })).toBe(false);
    expect(isRetryable(new Error("disk I/O error"))).toBe(false);
  });

  // SQLite runs one write transaction at a time (write-queue.ts), so two can never hold a lock each.
  it.skipIf(isSqlite)("two transactions locking two rows in opposite order: PostgreSQL rolls one back, it runs again, and both commit", async () => {
    await Probe.destroy({ where: {} });
    const a = (await Probe.create({ label: "a" })).get("id") as number;
    const b = (await Probe.create({ label: "b" })).get("id") as number;
    // Both hold their first row before either asks for its second: a deadlock every time.
    let holding = 0;
    const bothHold = gate();
    let attempts = 0;
    const cross = (first: number, second: number, name: string) =>
      sequelize.transaction(async (transaction) => {
        attempts++;
        await Probe.update({ label: `${name} first` }, { where: { id: first }, transaction });
        if (++holding === 2) bothHold.open();
        await bothHold.opened;
        await Probe.update({ label: `${name} second` }, { where: { id: second }, transaction });
      });
    await Promise.all([cross(a, b, "x"), cross(b, a, "y")]);
    expect(attempts).toBe(3);
    // The one run again committed last, so both rows carry its labels.
    expect([
      ["x first", "x second"],
      ["y second", "y first"],
    ]).toContainEqual(await labels());
  });
});
