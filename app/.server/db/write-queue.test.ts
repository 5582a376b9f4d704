import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { DataTypes, type Model, type ModelStatic } from "sequelize";
import { isSqlite, sequelize } from "./connection";
import { WriteQueue, isRead } from "./write-queue";

let Probe: ModelStatic<Model<{ id?: number; label: string }>>;

beforeAll(async () => {
  Probe = sequelize.define("QueueProbe", { label: { type: DataTypes.STRING, allowNull: false } }, { tableName: "queue_probe" });
  await Probe.sync();
});

afterAll(() => sequelize.close());

/** A promise and the function that settles it: lets a test hold a transaction open until it says so. */
function gate() {
  let open!: () => void;
  const opened = new Promise<void>((resolve) => (open = resolve));
  return { opened, open };
}

const labels = async () => (await Probe.findAll({ order: [["id", "ASC"]] })).map((p) => p.get("label"));

// The queue is SQLite's (one writer per file); PostgreSQL has row locks and runs writers side by side,
// so there a write outside a transaction does not wait for an open one. The refusals of queries and
// transactions started inside a callback hold on both and are tested in transaction-scope.test.ts.
describe.skipIf(!isSqlite)("the write queue (SQLite)", () => {
  it("hands out turns first come, first served", async () => {
    const queue = new WriteQueue();
    const order: number[] = [];
    await Promise.all([1, 2, 3, 4].map((n) => queue.run(async () => void order.push(n))));
    expect(order).toEqual([1, 2, 3, 4]);
    expect(queue.length).toBe(0);
  });

  it("tells reads from writes", () => {
    expect(isRead("SELECT 1", "RAW")).toBe(true);
    expect(isRead("PRAGMA journal_mode", undefined)).toBe(true);
    expect(isRead("PRAGMA foreign_keys = OFF", undefined)).toBe(false);
    expect(isRead("UPDATE x SET a = 1", "RAW")).toBe(false);
    expect(isRead("INSERT INTO x VALUES (1)", "INSERT")).toBe(false);
    expect(isRead("anything", "SELECT")).toBe(true);
  });

  it("a write outside any transaction waits for the open transaction, then lands after it", async () => {
    await Probe.destroy({ where: {} });
    const holding = gate();
    const release = gate();
    const tx = sequelize.transaction(async (transaction) => {
      await Probe.create({ label: "in transaction" }, { transaction });
      holding.open();
      await release.opened;
    });
    await holding.opened;
    const outside = Probe.create({ label: "outside" });
    // Reads go on beside the writer and see only what is committed.
    expect(await labels()).toEqual([]);
    release.open();
    await Promise.all([tx, outside]);
    expect(await labels()).toEqual(["in transaction", "outside"]);
  });

  it("Sequelize's own unmanaged transactions (findOrCreate) give their turn back, also when they fail", async () => {
    await Probe.destroy({ where: {} });
    const results = await Promise.all(Array.from({ length: 8 }, (_, i) => Probe.findOrCreate({ where: { label: `same ${i % 2}` } })));
    expect(results.filter(([, created]) => created)).toHaveLength(2);
    await expect(Probe.findOrCreate({ where: { label: null as never } })).rejects.toThrow();
    // Were a turn still held, this would never finish.
    await sequelize.transaction(async (transaction) => Probe.create({ label: "after" }, { transaction }));
    expect(await Probe.count()).toBe(3);
  });

  it("a transaction that fails gives its turn back", async () => {
    await expect(sequelize.transaction(async () => Promise.reject(new Error("refused")))).rejects.toThrow("refused");
    await Probe.create({ label: "next" });
    expect(await Probe.count({ where: { label: "next" } })).toBe(1);
  });
});
