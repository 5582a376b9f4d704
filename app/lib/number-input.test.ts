import { describe, expect, it } from "vitest";
import { z } from "zod";
import { NOT_A_NUMBER, numberOrNull, readNumber } from "./number-input";
import { runSchema } from "./validation/run";
import { labSettingsSchema } from "./validation/settings";
import { viewSetupSchema } from "./validation/view-setup";
import { bookingRequestSchema } from "./validation/bookings";
import { equipmentSchema } from "./validation/equipment";

describe("readNumber: what people type into a number field", () => {
  it.each([
    ["10.5", 10.5],
    ["10,5", 10.5],
    [" 12.5 ", 12.5],
    ["-3", -3],
    ["\u22123", -3],
    ["+4", 4],
    [".5", 0.5],
    [",5", 0.5],
    ["7.", 7],
    ["1e-3", 0.001],
    ["2,5E2", 250],
    [12, 12],
  ])("reads %j as %d", (text, value) => {
    expect(readNumber(text)).toEqual({ kind: "number", value });
  });

  it.each(["", "   ", undefined, null])("reads %j as blank", (text) => {
    expect(readNumber(text)).toEqual({ kind: "blank" });
  });

  it.each(["ten", "1,000.5", "1.000,5", "1,2,3", "1.2.3", "0x10", "Infinity", "NaN", "12 rpm", "1e999", "-", ",", "1 000", true, [], {}, Number.NaN, Infinity])(
    "refuses %j",
    (text) => {
      expect(readNumber(text)).toEqual({ kind: "invalid" });
    },
  );

  it("gives a live preview its number, or null", () => {
    expect(numberOrNull("12,5")).toBe(12.5);
    expect(numberOrNull("12.")).toBe(12);
    expect(numberOrNull("")).toBeNull();
    expect(numberOrNull("x")).toBeNull();
  });
});

const messages = (r: { success: boolean; error?: z.ZodError }) => Object.fromEntries((r.error?.issues ?? []).map((i) => [i.path.join("."), i.message]));

describe("every form's schema reads numbers through it", () => {
  const run = {
    tableId: "1",
    tankId: "2",
    cameraId: "3",
    setRateRpm: "10,5",
    direction: "ccw",
    waterDepthCm: "12,5",
    waterTemperatureC: "20",
    cameraMode: "rotating",
    frameRateFps: "29,97",
    tracer: "float",
    purpose: "Inertial circles",
  };

  it("takes a decimal comma in the run form", () => {
    const r = runSchema.safeParse(run);
    expect(r.success).toBe(true);
    expect(r.data).toMatchObject({ setRateRpm: 10.5, waterDepthCm: 12.5, frameRateFps: 29.97 });
  });

  it("says 'not a number' for words and 'enter' for blanks, on each field at once", () => {
    const r = runSchema.safeParse({ ...run, setRateRpm: "ten", waterDepthCm: "", frameRateFps: "fast" });
    expect(messages(r)).toMatchObject({ setRateRpm: NOT_A_NUMBER, waterDepthCm: "Enter the water depth.", frameRateFps: NOT_A_NUMBER });
  });

  it("does the same in the settings, booking, equipment and view setup forms", () => {
    expect(messages(labSettingsSchema.safeParse({ checkTolerancePct: "2,5", spinUpTimesToWait: "ten" })).spinUpTimesToWait).toBe(NOT_A_NUMBER);
    const booking = bookingRequestSchema.safeParse({
      equipmentId: "1",
      start: "2030-01-01T10:00",
      end: "2030-01-01T12:00",
      purpose: "Lab class",
      plannedRateRpm: "10,5",
      plannedDepthCm: "deep",
    });
    expect(messages(booking)).toEqual({ plannedDepthCm: NOT_A_NUMBER });
    const item = equipmentSchema.safeParse({ kind: "tank", name: "Tank", diameterCm: "57,2", depthCm: "25" });
    expect(item.data).toMatchObject({ diameterCm: 57.2, depthCm: 25 });
    const setup = viewSetupSchema.safeParse({ centreX: "320,5", centreY: "abc", mirrored: "" });
    expect(messages(setup)).toEqual({ centreY: NOT_A_NUMBER });
  });

  it("writes 'at least 1 day', not '1 days'", () => {
    const r = labSettingsSchema.safeParse({
      checkTolerancePct: "3",
      spinUpTimesToWait: "5",
      rateCalibrationIntervalDays: "0",
      scaleCalibrationIntervalDays: "365",
      timingCheckIntervalDays: "365",
      calibrationReminderDays: "0",
      sessionIdleHours: "8",
    });
    expect(messages(r).rateCalibrationIntervalDays).toBe("Rate calibration interval must be at least 1 day.");
  });
});

describe("a form's errors come all at once, each on its field", () => {
  it("calibration: every bad reading and every missing field in one answer", async () => {
    const { calibrationSchema } = await import("./validation/calibrations");
    const r = calibrationSchema.safeParse({
      kind: "rate",
      equipmentId: "3",
      performedOn: "2026-01-01",
      readings: [
        { setRpm: "x", measuredRpm: "1" },
        { setRpm: "2", measuredRpm: "y" },
      ],
    });
    expect(messages(r)).toEqual({
      "readings.0.setRpm": NOT_A_NUMBER,
      "readings.1.measuredRpm": NOT_A_NUMBER,
      meterId: "Choose the rate meter the readings were taken with.",
      readings: "Enter readings at 3 or more set rates (2 entered).",
    });
  });

  it("equipment: a bad number beside a missing one", () => {
    expect(messages(equipmentSchema.safeParse({ kind: "tank", name: "Tank", diameterCm: "wide" }))).toEqual({
      diameterCm: NOT_A_NUMBER,
      depthCm: "A tank needs its inner depth.",
    });
  });
});
