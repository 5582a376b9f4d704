import { describe, expect, it } from "vitest";
import { historyEntryText } from "./history-text";

const dateTime = (iso: string) => `at ${iso}`;
const entry = (field: string, fieldLabel: string, oldValue: string | null, newValue: string | null) => ({ field, fieldLabel, oldValue, newValue });

describe("history lines in words", () => {
  it("says a happening once, with its detail only when it adds something", () => {
    expect(historyEntryText(entry("created", "logged", null, "logged"), ["created"], dateTime)).toEqual({
      what: "Logged",
      change: { event: true, detail: null },
    });
    expect(historyEntryText(entry("created", "logged", null, "correction of run 12"), ["created"], dateTime)).toEqual({
      what: "Logged",
      change: { event: true, detail: "correction of run 12" },
    });
    expect(historyEntryText(entry("signedOff", "signed off", null, null), ["signedOff"], dateTime).what).toBe("Signed off");
  });

  it("shows stored numbers with their units and without float noise, and drops the unit from the label", () => {
    expect(historyEntryText(entry("waterDepthM", "water depth (m)", "0.57", "0.1"), [], dateTime)).toEqual({
      what: "Water depth",
      change: { event: false, from: "57 cm", to: "10 cm" },
    });
    expect(historyEntryText(entry("setRateRpm", "set rate (rpm)", "10", "12.5"), [], dateTime).change).toEqual({
      event: false,
      from: "10 rpm",
      to: "12.5 rpm",
    });
    expect(historyEntryText(entry("waterTemperatureC", "water temperature (°C)", "20", "21.5"), [], dateTime).what).toBe("Water temperature");
  });

  it("shows codes by their labels, instants through the page's clock, and an empty value as none", () => {
    expect(historyEntryText(entry("direction", "direction", "ccw", "cw"), [], dateTime).change).toEqual({
      event: false,
      from: "Counterclockwise (seen from above)",
      to: "Clockwise (seen from above)",
    });
    expect(historyEntryText(entry("rateReachedAt", "rate reached at", null, "2026-12-03T08:50:00.000Z"), [], dateTime).change).toEqual({
      event: false,
      from: null,
      to: "at 2026-12-03T08:50:00.000Z",
    });
  });

  it("leaves other fields as written, their labels capitalised", () => {
    expect(historyEntryText(entry("purpose", "purpose", "old words", "new words"), [], dateTime)).toEqual({
      what: "Purpose",
      change: { event: false, from: "old words", to: "new words" },
    });
    expect(historyEntryText(entry("knownLengthM", "known length (m)", "0.3", "0.25"), [], dateTime).what).toBe("Known length (m)");
  });
});
