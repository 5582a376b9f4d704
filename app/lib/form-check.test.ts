import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { formCheck } from "./form-check";
import { NOT_A_NUMBER } from "./number-input";
import { calibrationSchema } from "./validation/calibrations";

const routes = path.resolve(import.meta.dirname, "../routes");

function routeModules(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) return routeModules(p);
    return /\.tsx?$/.test(e.name) && !e.name.includes(".test.") ? [p] : [];
  });
}

describe("formCheck: how every form checks itself before it is sent", () => {
  it("checks the whole schema on submit and again on input, never on blur", () => {
    const options = formCheck(calibrationSchema);
    expect(options.shouldValidate).toBe("onSubmit");
    expect(options.shouldRevalidate).toBe("onInput");
  });

  it("a first submit of the rate calibration form gets every error at once, each under its field's name", () => {
    const formData = new FormData();
    for (const [name, value] of [
      ["kind", "rate"],
      ["equipmentId", "1"],
      ["performedOn", "2026-03-02"],
      ["meterId", ""],
      ["readings[0].setRpm", "five"],
      ["readings[0].measuredRpm", "5,01"],
      ["readings[1].setRpm", "10"],
      ["readings[1].measuredRpm", "x"],
    ]) {
      formData.append(name!, value!);
    }
    const submission = formCheck(calibrationSchema).onValidate({ formData });
    expect(submission.status).toBe("error");
    const errors = submission.status === "success" ? {} : (submission.error ?? {});
    expect(errors["readings[0].setRpm"]).toEqual([NOT_A_NUMBER]);
    expect(errors["readings[1].measuredRpm"]).toEqual([NOT_A_NUMBER]);
    expect(errors["readings[0].measuredRpm"]).toBeUndefined();
    expect(errors.meterId).toEqual(["Choose the rate meter the readings were taken with."]);
    expect(errors.readings).toEqual(["Enter readings at 3 or more set rates (2 entered)."]);
  });

  it("a half-filled reading row asks for its other rate on that row, below an empty one too, instead of calling the blank zero", () => {
    const formData = new FormData();
    for (const [name, value] of [
      ["kind", "rate"],
      ["equipmentId", "1"],
      ["performedOn", "2026-03-02"],
      ["meterId", "2"],
      ["readings[0].setRpm", ""],
      ["readings[0].measuredRpm", ""],
      ["readings[1].setRpm", "5"],
      ["readings[1].measuredRpm", ""],
      ["readings[2].setRpm", ""],
      ["readings[2].measuredRpm", "10.02"],
    ]) {
      formData.append(name!, value!);
    }
    const submission = formCheck(calibrationSchema).onValidate({ formData });
    const errors = submission.status === "success" ? {} : (submission.error ?? {});
    // Each message on the row that was half filled in, not on the empty row above it.
    expect(errors["readings[1].measuredRpm"]).toEqual(["Enter the measured rate for this row as well, or clear the row."]);
    expect(errors["readings[2].setRpm"]).toEqual(["Enter the set rate for this row as well, or clear the row."]);
    expect(Object.keys(errors).filter((k) => k.startsWith("readings[0]") || k === "readings[1].setRpm")).toEqual([]);
    expect(errors.readings).toEqual(["Enter readings at 3 or more set rates (2 entered)."]);
  });

  it("every form in app/routes takes its options from formCheck, none sets its own moment to check", () => {
    const modules = routeModules(routes);
    const withForms = modules.filter((file) => fs.readFileSync(file, "utf8").includes("useForm("));
    expect(withForms.length).toBeGreaterThan(5);
    for (const file of withForms) {
      const source = fs.readFileSync(file, "utf8");
      const name = path.relative(routes, file);
      expect(source, name).toMatch(/\.\.\.formCheck\(/);
      expect(source, name).not.toMatch(/shouldValidate|shouldRevalidate:/);
    }
  });
});
