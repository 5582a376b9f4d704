import { describe, expect, it } from "vitest";
import { parseRunFilters, runFiltersToSearch } from "./run-filters";

const parse = (s: string) => parseRunFilters(new URLSearchParams(s));

describe("runs-table filters from the address", () => {
  it("fills in the default sort and page when none are given", () => {
    expect(parse("")).toEqual({ ok: true, filters: { sort: "createdAt", dir: "desc", page: 1, pageSize: 25 } });
  });

  it("reads every filter, ignoring empty values and the router's own parameters", () => {
    const r = parse(
      "table=3&technician=7&state=checked&verdict=disagrees&from=2025-01-01&to=2025-01-31&q=%20dye%20&sort=setRateRpm&dir=asc&page=2&pageSize=50&notes=&index&_routes=x",
    );
    expect(r).toEqual({
      ok: false,
      field: "notes",
      message: expect.stringContaining('Unknown filter "notes"'),
    });
    const ok = parse(
      "table=3&technician=7&state=checked&verdict=disagrees&from=2025-01-01&to=2025-01-31&q=%20dye%20&sort=setRateRpm&dir=asc&page=2&pageSize=50&index&_routes=x",
    );
    expect(ok).toEqual({
      ok: true,
      filters: {
        table: 3,
        technician: 7,
        state: "checked",
        verdict: "disagrees",
        from: "2025-01-01",
        to: "2025-01-31",
        q: "dye",
        sort: "setRateRpm",
        dir: "asc",
        page: 2,
        pageSize: 50,
      },
    });
  });

  it("refuses an unknown filter and an unknown sort field by name", () => {
    const unknown = parse("colour=blue");
    expect(unknown.ok).toBe(false);
    if (!unknown.ok) expect(unknown.message).toMatch(/Unknown filter "colour"/);
    const sort = parse("sort=technicianName");
    expect(sort.ok).toBe(false);
    if (!sort.ok) {
      expect(sort.field).toBe("sort");
      expect(sort.message).toBe(
        'There is no sort "technicianName": the runs list sorts by createdAt (logged), id (run), setRateRpm (set rate), waterDepthM (depth), waterTemperatureC (water temp.), frameCount (frames), state (state), verdict (verdict).',
      );
    }
  });

  it("refuses malformed and impossible dates, and a range that ends before it starts", () => {
    for (const [q, text] of [
      ["from=14/03/2025", /YYYY-MM-DD/],
      ["to=2025-02-30", /not a real calendar date/],
      ["from=2025-03-02&to=2025-03-01", /from must be on or before to/],
    ] as const) {
      const r = parse(q);
      expect(r.ok, q).toBe(false);
      if (!r.ok) expect(r.message).toMatch(text);
    }
  });

  it("refuses page 0, a fractional page, an odd page size and a repeated parameter", () => {
    for (const q of ["page=0", "page=1.5", "page=-2", "pageSize=33", "state=draft&state=checked", "table=abc"]) {
      expect(parse(q).ok, q).toBe(false);
    }
  });

  it("writes a filter set back as a short link that reads the same", () => {
    const filters = { table: 2, verdict: "none" as const, q: "50% glycerol", sort: "createdAt" as const, dir: "desc" as const, page: 3, pageSize: 25 as const };
    const search = runFiltersToSearch(filters);
    expect(search).toBe("?table=2&verdict=none&q=50%25+glycerol&page=3");
    expect(parse(search.slice(1))).toEqual({ ok: true, filters });
  });
});
