import { describe, expect, it } from "vitest";
import PgBoss from "pg-boss";
import { QUEUES, bossOptions, createQueues } from "./boss";

const onPostgres = /^postgres(ql)?:\/\//.test(process.env.DATABASE_URL ?? "");

// Processes that start together on a database the queue has never seen (a fresh deployment, or the
// two workers of a test) each make the queues. pg-boss's create_queue makes a partition table and
// adds keys to the job table, so two at once can deadlock in PostgreSQL; one of them used to die.
describe.skipIf(!onPostgres)("starting the shared job queue from several processes at once (PostgreSQL only)", () => {
  it("four queue clients starting together on a fresh schema all start, and each queue exists once", async () => {
    for (let round = 0; round < 4; round++) {
      const schema = `boss_start_${round}`;
      const bosses = Array.from({ length: 4 }, () => new PgBoss(bossOptions({ schema, max: 3 })));
      try {
        await Promise.all(bosses.map((b) => b.start()));
        const outcomes = await Promise.allSettled(bosses.map((b) => createQueues(b)));
        const failed = outcomes.flatMap((o) => (o.status === "rejected" ? [String((o.reason as Error).message)] : []));
        expect(failed, `round ${round}`).toEqual([]);
        const names = (await bosses[0]!.getQueues()).map((q) => q.name).sort();
        expect(names).toEqual(Object.values(QUEUES).sort());
      } finally {
        await Promise.all(bosses.map((b) => b.stop({ graceful: false }).catch(() => undefined)));
      }
    }
  }, 120_000);
});
