import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Equipment, Run, sequelize } from "./db";
import { smallLab } from "./test-support";
import { createRun } from "./runs/service";
import { listRuns } from "./runs/queries";
import { createCalibration, signOffCalibration, toDayString } from "./calibrations";
import { DASHBOARD_LIST_SIZE, getDashboard } from "./dashboard";
import { stopFakeSmtp } from "./mail/fake-smtp";
import type { RunState, Verdict } from "~/lib/runs";

let lab: Awaited<ReturnType<typeof smallLab>>;
let meter: Equipment;

const daysAgo = (n: number) => toDayString(new Date(Date.now() - n * 86_400_000));
const rateCalibration = (day: number) => ({
  kind: "rate" as const,
  equipmentId: lab.table.id,
  meterId: meter.id,
  performedOn: daysAgo(day),
  readings: [5, 10, 15, 20].map((s) => ({ setRpm: s, measuredRpm: 1.002 * s })),
});

/** Logs `n` runs and puts them in `state` (and `verdict`), oldest first. */
async function runsIn(n: number, state: RunState, verdict: Verdict | null = null) {
  const ids: number[] = [];
  for (let i = 0; i < n; i++) {
    const run = await createRun(lab.runInput({ purpose: `${state} ${i}` }), lab.tech);
    await Run.update({ state, verdict }, { where: { id: run.id } });
    ids.push(run.id);
  }
  return ids;
}

beforeAll(async () => {
  lab = await smallLab();
  meter = await Equipment.create({ kind: "rate_meter", name: "Dashboard tachometer", meterType: "tachometer" } as never);
});

afterAll(async () => {
  await stopFakeSmtp();
  await sequelize.close();
});

describe("the dashboard's counts and lists", () => {
  it("lists every checked run when there are few, and says so with the same number", async () => {
    const ids = await runsIn(3, "checked");
    const d = await getDashboard(lab.manager);
    expect(d.queues.signOff?.total).toBe(3);
    expect(d.queues.signOff?.items.map((r) => r.id)).toEqual(ids);
  });

  it("counts every checked run beside the oldest few it lists, the same count the runs list gives", async () => {
    const more = await runsIn(4, "checked");
    const d = await getDashboard(lab.manager);
    const queue = d.queues.signOff!;
    expect(queue.total).toBe(7);
    expect(queue.items).toHaveLength(DASHBOARD_LIST_SIZE);
    expect(queue.items.every((r) => r.state === "checked")).toBe(true);
    expect(queue.items.map((r) => r.id)).not.toContain(more.at(-1));
    // The card's "All 7" link opens the runs list with this filter: it finds as many.
    const page = await listRuns({ state: "checked", sort: "createdAt", dir: "asc", page: 1, pageSize: 25 });
    expect(page.total).toBe(queue.total);
    expect(page.items.slice(0, DASHBOARD_LIST_SIZE).map((r) => r.id)).toEqual(queue.items.map((r) => r.id));
  });

  it("counts a technician's own queue only, and disagreeing verdicts for everyone", async () => {
    await runsIn(2, "tracked");
    const others = await createRun(lab.runInput({ purpose: "someone else's" }), lab.otherTech);
    await Run.update({ state: "tracked" }, { where: { id: others.id } });
    await runsIn(1, "checked", "disagrees");
    const tech = await getDashboard(lab.tech);
    expect(tech.queues.checking?.total).toBe(2);
    expect(tech.queues.checking?.items).toHaveLength(2);
    expect(tech.queues.signOff).toBeNull();
    const manager = await getDashboard(lab.manager);
    expect(manager.queues.checking?.total).toBe(3);
    expect(manager.queues.checking?.items).toHaveLength(3);
    expect(manager.disagreeing.total).toBe(1);
    expect(manager.disagreeing.items).toHaveLength(1);
    expect(manager.queues.signOff?.total).toBe(8);
  });

  it("lists calibration records waiting for sign-off: every one for a lab manager, a technician's own for them", async () => {
    const none = await getDashboard(lab.manager);
    expect(none.calibrationSignOff).toEqual({ items: [], total: 0, mine: false });

    const mine = [await createCalibration(rateCalibration(30), lab.tech), await createCalibration(rateCalibration(20), lab.tech)];
    const theirs = await createCalibration(rateCalibration(25), lab.otherTech);
    const signed = await createCalibration(rateCalibration(10), lab.otherTech);
    await signOffCalibration(signed.id, lab.manager);

    const manager = await getDashboard(lab.manager);
    expect(manager.calibrationSignOff?.total).toBe(3);
    // Oldest first, named for people.
    expect(manager.calibrationSignOff?.items.map((c) => c.id)).toEqual([mine[0]!.id, theirs.id, mine[1]!.id]);
    expect(manager.calibrationSignOff?.items[0]).toMatchObject({ equipmentName: lab.table.name, performedByName: "Test Technician", kind: "rate" });

    const tech = await getDashboard(lab.tech);
    expect(tech.calibrationSignOff).toMatchObject({ total: 2, mine: true });
    expect(tech.calibrationSignOff?.items.map((c) => c.id)).toEqual(mine.map((c) => c.id));
    expect((await getDashboard(lab.instructor)).calibrationSignOff).toBeNull();
  });

  it("counts more waiting records than it lists, from the same statement", async () => {
    for (let i = 0; i < DASHBOARD_LIST_SIZE; i++) await createCalibration(rateCalibration(5), lab.otherTech);
    const d = await getDashboard(lab.manager);
    expect(d.calibrationSignOff?.total).toBe(3 + DASHBOARD_LIST_SIZE);
    expect(d.calibrationSignOff?.items).toHaveLength(DASHBOARD_LIST_SIZE);
  });
});
