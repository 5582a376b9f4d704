import { describe, expect, it } from "vitest";
import { ADVISORY_LOCKS, withAdvisoryLock } from "./advisory-lock";
import { migrate } from "./migrate";

const onPostgres = /^postgres(ql)?:\/\//.test(process.env.DATABASE_URL ?? "");
const pause = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

describe.skipIf(!onPostgres)("start-up work done one process at a time (PostgreSQL only)", () => {
  it("holders of one lock take turns, another lock's holder does not wait for them, and a failure lets go", async () => {
    const spans: { who: string; from: number; to: number }[] = [];
    const hold = (who: string, key: number) =>
      withAdvisoryLock(key, async () => {
        const from = performance.now();
        await pause(150);
        spans.push({ who, from, to: performance.now() });
      });
    await Promise.all([hold("a", ADVISORY_LOCKS.queues), hold("b", ADVISORY_LOCKS.queues), hold("c", ADVISORY_LOCKS.migrations)]);
    const [a, b, c] = ["a", "b", "c"].map((who) => spans.find((s) => s.who === who)!);
    // a and b never overlap; c ran beside whichever of them came first.
    expect(a!.to <= b!.from || b!.to <= a!.from).toBe(true);
    const first = a!.from < b!.from ? a! : b!;
    expect(c!.from < first.to && first.from < c!.to).toBe(true);

    await expect(
      withAdvisoryLock(ADVISORY_LOCKS.queues, async () => {
        throw new Error("went wrong inside");
      }),
    ).rejects.toThrow("went wrong inside");
    // Released: the next holder gets it at once.
    const t0 = performance.now();
    expect(await withAdvisoryLock(ADVISORY_LOCKS.queues, async () => "got it")).toBe("got it");
    expect(performance.now() - t0).toBeLessThan(2_000);
  });

  it("three starts migrating one fresh database at once: one applies the migrations, the others find none pending", async () => {
    const applied = await Promise.all([migrate(), migrate(), migrate()]);
    const counts = applied.map((names) => names.length).sort((x, y) => x - y);
    expect(counts[0]).toBe(0);
    expect(counts[1]).toBe(0);
    expect(counts[2]).toBeGreaterThan(10);
    expect(await migrate()).toEqual([]);
  });
});
