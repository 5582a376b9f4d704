import { describe, expect, it } from "vitest";
import { calibrationFiltersToSearch, calibrationMatches, parseCalibrationFilters } from "./calibration-filters";

const parse = (search: string) => parseCalibrationFilters(new URLSearchParams(search));

describe("parseCalibrationFilters", () => {
  it("reads kind, item, standing and text; empty values are any", () => {
    expect(parse("kind=rate&equipment=4&standing=draft&q=%20belt%20")).toEqual({
      ok: true,
      filters: { kind: "rate", equipment: 4, standing: "draft", q: "belt" },
    });
    expect(parse("kind=&equipment=&standing=&q=")).toEqual({ ok: true, filters: {} });
  });

  it("refuses what it cannot use with a message that names what can be", () => {
    expect(parse("kind=speed")).toEqual({ ok: false, field: "kind", message: expect.stringContaining('There is no kind "speed"') as string });
    const bad = parse("kind=speed");
    expect(bad.ok ? "" : bad.message).toMatch(/rate \(rate calibration\), scale \(scale calibration\), timing \(timing check\)/);
    expect(parse("standing=old")).toMatchObject({ ok: false, field: "standing", message: expect.stringContaining("draft (awaiting sign-off)") as string });
    expect(parse("equipment=0")).toMatchObject({ ok: false, field: "equipment" });
    expect(parse("sort=date")).toMatchObject({ ok: false, field: "sort", message: expect.stringContaining('Unknown filter "sort"') as string });
    expect(parse("kind=rate&kind=scale")).toMatchObject({ ok: false, field: "kind", message: "Give kind once; it was given 2 times." });
    expect(parse("q=a%00b")).toMatchObject({ ok: false, field: "q" });
  });

  it("ignores the router's own parameters", () => {
    expect(parse("index&kind=scale")).toEqual({ ok: true, filters: { kind: "scale" } });
  });
});

describe("calibrationFiltersToSearch and calibrationMatches", () => {
  it("writes only what is set, and reads back the same filters", () => {
    expect(calibrationFiltersToSearch({})).toBe("");
    const search = calibrationFiltersToSearch({ standing: "draft", q: "belt drive" });
    expect(search).toBe("?standing=draft&q=belt+drive");
    expect(parse(search.slice(1))).toEqual({ ok: true, filters: { standing: "draft", q: "belt drive" } });
  });

  it("matches text in the item, the person or the notes, in any case", () => {
    const record = {
      kind: "rate",
      equipmentId: 3,
      standing: "draft",
      equipmentName: "Table A",
      performedByName: "Priya Castellanos",
      notes: "New belt fitted",
    };
    expect(calibrationMatches(record, { q: "BELT" })).toBe(true);
    expect(calibrationMatches(record, { q: "priya" })).toBe(true);
    expect(calibrationMatches(record, { q: "table a", kind: "rate", equipment: 3, standing: "draft" })).toBe(true);
    expect(calibrationMatches(record, { q: "camera" })).toBe(false);
    expect(calibrationMatches(record, { kind: "scale" })).toBe(false);
    expect(calibrationMatches(record, { equipment: 4 })).toBe(false);
    expect(calibrationMatches(record, { standing: "in_force" })).toBe(false);
    expect(calibrationMatches({ ...record, notes: null }, { q: "belt" })).toBe(false);
  });
});
