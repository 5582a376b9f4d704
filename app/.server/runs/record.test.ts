import { beforeAll, describe, expect, it } from "vitest";
import { migrate, Run } from "../db";
import { createRun, updateRun, RunError } from "./service";
import { getRunHistory, getSignOffView, getSupersedesLinks, signOffRun } from "./record";
import { getRunColumnChoice, saveRunColumnChoice } from "./queries";
import { checkedRunFor, runInput, seedRunLab, type RunLab } from "./testing";
import { defaultRunColumnChoice } from "~/lib/validation/run-filters";

let lab: RunLab;
beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
});

describe("sign-off", () => {
  it("refuses a run without a theory check and anyone but a lab manager, changing nothing", async () => {
    const run = await createRun(runInput(lab), lab.technician);
    await expect(signOffRun(run.id, lab.manager)).rejects.toMatchObject({
      status: 409,
      code: "not_checked",
      message: expect.stringMatching(/only a run with a theory check/),
    });
    await run.update({ state: "checked" });
    await expect(signOffRun(run.id, lab.technician)).rejects.toMatchObject({ status: 403 });
    await run.reload();
    expect([run.state, run.signedOffAt]).toEqual(["checked", null]);
    const view = await getSignOffView(run, lab.technician);
    expect(view).toMatchObject({ canSignOff: false, canCorrect: false });
  });

  it("signs a checked run off, records who and when, and makes it read-only", async () => {
    const { run } = await checkedRunFor(lab, lab.technician);
    expect((await getSignOffView(run, lab.manager)).canSignOff).toBe(true);
    await signOffRun(run.id, lab.manager);
    await run.reload();
    expect(run.state).toBe("signed_off");
    expect(run.signedOffById).toBe(lab.manager.id);
    expect(run.signedOffAt).toBeInstanceOf(Date);
    await expect(signOffRun(run.id, lab.manager)).rejects.toMatchObject({ status: 409, message: expect.stringMatching(/already signed off/) });
    await expect(updateRun(run.id, runInput(lab, { purpose: "Changed afterwards" }), lab.manager)).rejects.toBeInstanceOf(RunError);
    expect((await Run.findByPk(run.id))?.purpose).toBe("Inertial circle demonstration");
    const view = await getSignOffView(run, lab.technician);
    expect(view).toMatchObject({ state: "signed_off", signedOffBy: { name: "Dara Quist" }, canCorrect: true });
    expect((await getSignOffView(run, lab.instructor)).canCorrect).toBe(false);
  });
});

describe("history and corrections", () => {
  it("shows each change as who, field, old → new, with names for equipment and states", async () => {
    const run = await createRun(runInput(lab), lab.technician);
    await updateRun(run.id, runInput(lab, { tableId: lab.tableB.id, waterTemperatureC: 19.5 }), lab.technician);
    const history = await getRunHistory(run.id);
    expect(history.map((h) => [h.who?.name, h.fieldLabel, h.oldValue, h.newValue])).toEqual([
      ["Ada Brightwater", "logged", null, "logged"],
      ["Ada Brightwater", "table", "Bench table North", "Bench table South"],
      ["Ada Brightwater", "water temperature (°C)", "20", "19.5"],
    ]);
  });

  it("links a correction and the run it corrects both ways", async () => {
    const { run: original } = await checkedRunFor(lab, lab.technician);
    await signOffRun(original.id, lab.manager);
    const correction = await createRun(runInput(lab, { supersedesId: original.id, purpose: "Corrected depth" }), lab.technician);
    const fromOriginal = await getSupersedesLinks(original);
    const fromCorrection = await getSupersedesLinks(correction);
    expect(fromOriginal).toMatchObject({ supersedes: null, supersededBy: [{ id: correction.id, label: expect.stringMatching(/^R-\d{4}$/) }] });
    expect(fromCorrection).toMatchObject({ supersedes: { id: original.id }, supersededBy: [] });
    expect((await getRunHistory(correction.id))[0]!.newValue).toBe(`correction of run ${original.id}`);
  });
});

describe("column choice", () => {
  it("starts from the defaults and remembers each person's own choice", async () => {
    expect(await getRunColumnChoice(lab.technician.id)).toEqual(defaultRunColumnChoice);
    await saveRunColumnChoice(lab.technician.id, { hidden: ["purpose", "tank"] });
    await saveRunColumnChoice(lab.technician.id, { hidden: ["purpose"] });
    expect(await getRunColumnChoice(lab.technician.id)).toEqual({ hidden: ["purpose"] });
    expect(await getRunColumnChoice(lab.manager.id)).toEqual(defaultRunColumnChoice);
    await expect(saveRunColumnChoice(lab.manager.id, { hidden: ["nonsense" as "purpose"] })).rejects.toThrow();
  });
});
