import { beforeAll, describe, expect, it, vi } from "vitest";
import { Calibration, CalibrationHistory, migrate } from "./db";
import { createCalibration, signOffCalibration, toDayString, updateCalibration } from "./calibrations";
import { getCalibrationHistory } from "./calibration-history";
import { addCalibrationAttachment } from "./uploads/calibration-attachments";
import { seedRunLab, type RunLab } from "./runs/testing";
import type { CalibrationInput } from "~/lib/validation/calibrations";

let lab: RunLab;
const png = Buffer.from(
  "89504e470d0a1a0a0000000d49484452000000010000000108060000001f15c4890000000d49444154789c6360000002000154a24f5d0000000049454e44ae426082",
  "hex",
);
const scale = (over: Partial<CalibrationInput> = {}): CalibrationInput => ({
  kind: "scale",
  equipmentId: lab.camera.id,
  performedOn: toDayString(new Date(Date.now() - 2 * 86_400_000)),
  knownLengthMm: 300,
  knownLengthUncertaintyMm: 0.5,
  lengthPx: 600,
  lengthUncertaintyPx: 1,
  ...over,
});

beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
});

describe("a calibration record's history", () => {
  it("keeps who recorded it, each changed field old → new, each file attached and the sign-off, in order", async () => {
    const cal = await createCalibration(scale(), lab.technician);
    await updateCalibration(cal.id, scale({ knownLengthMm: 250, notes: "Ruler re-read" }), lab.technician);
    await addCalibrationAttachment(cal.id, { name: "ruler.png", bytes: png }, lab.technician);
    await signOffCalibration(cal.id, lab.manager);
    const history = await getCalibrationHistory(cal.id);
    expect(history.map((h) => [h.field, h.oldValue, h.newValue, h.who?.name])).toEqual([
      ["created", null, "Scale calibration", "Ada Brightwater"],
      ["notes", null, "Ruler re-read", "Ada Brightwater"],
      ["knownLengthM", "0.3", "0.25", "Ada Brightwater"],
      ["attachment", null, "ruler.png", "Ada Brightwater"],
      ["signedOff", null, null, "Dara Quist"],
    ]);
    expect(history[2]!.fieldLabel).toBe("known length (m)");
  });

  it("writes nothing for a refused change: another technician's edit, an edit after sign-off, a second sign-off", async () => {
    const cal = await createCalibration(scale(), lab.technician);
    await expect(updateCalibration(cal.id, scale({ notes: "not mine" }), lab.technician2)).rejects.toMatchObject({ status: 403 });
    await signOffCalibration(cal.id, lab.manager);
    await expect(updateCalibration(cal.id, scale({ notes: "too late" }), lab.manager)).rejects.toMatchObject({ status: 409 });
    await expect(signOffCalibration(cal.id, lab.manager)).rejects.toMatchObject({ status: 409 });
    await expect(addCalibrationAttachment(cal.id, { name: "late.png", bytes: png }, lab.manager)).rejects.toMatchObject({ status: 409 });
    expect((await getCalibrationHistory(cal.id)).map((h) => h.field)).toEqual(["created", "signedOff"]);
  });

  it("stands or falls with its history line: a failing history write leaves the record as it was", async () => {
    const cal = await createCalibration(scale(), lab.technician);
    // The record is updated first, then its history line fails: the update must not survive.
    const spy = vi.spyOn(CalibrationHistory, "create").mockRejectedValueOnce(new Error("disk full"));
    try {
      await expect(updateCalibration(cal.id, scale({ notes: "half-written" }), lab.technician)).rejects.toThrow("disk full");
    } finally {
      spy.mockRestore();
    }
    expect((await Calibration.findByPk(cal.id))!.notes).toBeNull();
    expect((await getCalibrationHistory(cal.id)).map((h) => h.field)).toEqual(["created"]);
  });
});
