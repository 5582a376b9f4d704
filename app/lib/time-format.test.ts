import { afterEach, describe, expect, it } from "vitest";
import { addDays, formatDuration, fromZonedInput, isTimeZone, mondayOf, timeFormat, toZonedInput } from "./time-format";

const at = new Date("2026-12-03T08:50:00Z");
const savedTz = process.env.TZ;

afterEach(() => {
  process.env.TZ = savedTz;
});

describe("times in the lab's zone", () => {
  it.each(["Pacific/Auckland", "America/Los_Angeles", "UTC"])(
    "08:50Z reads 09:50 CET in Berlin and 03:50 GMT-5 in New York whatever the process zone (%s)",
    (tz) => {
      process.env.TZ = tz;
      expect(new Date(2026, 11, 3).getTimezoneOffset() === 0).toBe(tz === "UTC"); // the process zone really changed
      expect(timeFormat("Europe/Berlin").dateTime(at)).toBe("3 Dec 2026, 09:50 CET");
      expect(timeFormat("America/New_York").dateTime(at)).toBe("3 Dec 2026, 03:50 GMT-5");
      expect(timeFormat("UTC").time(at)).toBe("08:50 UTC");
    },
  );

  it("the date is the lab's day, not UTC's", () => {
    const late = new Date("2026-12-03T23:30:00Z");
    expect(timeFormat("Europe/Berlin").date(late)).toBe("4 Dec 2026");
    expect(timeFormat("America/New_York").date(late)).toBe("3 Dec 2026");
  });

  it("a range on one day names the day and the zone once; across days both ends in full", () => {
    const f = timeFormat("Europe/Berlin");
    expect(f.range("2026-12-03T08:50:00Z", "2026-12-03T10:50:00Z")).toBe("3 Dec 2026, 09:50–11:50 CET");
    expect(f.range("2026-12-03T08:50:00Z", "2026-12-04T10:50:00Z")).toBe("3 Dec 2026, 09:50 CET – 4 Dec 2026, 11:50 CET");
  });

  it("a moment with seconds carries its day, the lab's day", () => {
    // A run's "ready at" can fall after midnight or days after the rate was reached: a bare time hid that.
    expect(timeFormat("Europe/Berlin").dateTimeSeconds("2026-12-03T23:10:07Z")).toBe("4 Dec 2026, 00:10:07 CET");
    expect(timeFormat("America/New_York").dateTimeSeconds("2026-12-03T23:10:07Z")).toBe("3 Dec 2026, 18:10:07 GMT-5");
    expect(timeFormat("UTC").dateTimeSeconds(null)).toBe("—");
  });

  it("summer time shows its own name", () => {
    expect(timeFormat("Europe/Berlin").dateTime("2026-07-01T08:50:00Z")).toBe("1 Jul 2026, 10:50 CEST");
  });

  it("missing or broken instants show a dash; an unknown zone falls back to UTC", () => {
    expect(timeFormat("Europe/Berlin").dateTime(null)).toBe("—");
    expect(timeFormat("Europe/Berlin").date("not a date")).toBe("—");
    expect(timeFormat("Mars/Olympus").zone).toBe("UTC");
  });

  it("counts today and tomorrow in the lab's days", () => {
    const f = timeFormat("Europe/Berlin");
    const now = new Date("2026-12-03T22:30:00Z"); // 23:30 in Berlin
    expect(f.dayLabel("2026-12-03T22:50:00Z", now)).toBe("Today");
    expect(f.dayLabel("2026-12-03T23:10:00Z", now)).toBe("Tomorrow"); // 00:10 on the 4th in Berlin
    expect(f.dayLabel("2026-12-07T10:00:00Z", now)).toBe("Monday 7 Dec");
  });
});

describe("datetime-local fields on the lab's clock", () => {
  it("round-trips an instant through the field value", () => {
    process.env.TZ = "Asia/Tokyo";
    expect(toZonedInput(at, "Europe/Berlin")).toBe("2026-12-03T09:50");
    expect(fromZonedInput("2026-12-03T09:50", "Europe/Berlin")?.toISOString()).toBe("2026-12-03T08:50:00.000Z");
    expect(fromZonedInput("2026-12-03T03:50", "America/New_York")?.toISOString()).toBe("2026-12-03T08:50:00.000Z");
    expect(fromZonedInput("2026-07-01T10:50", "Europe/Berlin")?.toISOString()).toBe("2026-07-01T08:50:00.000Z");
  });

  it("reads the repeated hour in autumn as the first, and a time with its own zone as given", () => {
    // Berlin goes back from 03:00 CEST to 02:00 CET on 25 Oct 2026: 02:30 happens at 00:30Z and 01:30Z.
    expect(fromZonedInput("2026-10-25T02:30", "Europe/Berlin")?.toISOString()).toBe("2026-10-25T00:30:00.000Z");
    expect(fromZonedInput("2026-12-03T08:50:00Z", "Europe/Berlin")?.toISOString()).toBe("2026-12-03T08:50:00.000Z");
    expect(fromZonedInput("tomorrow", "Europe/Berlin")).toBeNull();
  });

  it("a time in the skipped spring hour is read with the offset from before the change", () => {
    // 29 Mar 2026: 02:00 CET jumps to 03:00 CEST; 02:30 does not exist on the clock, and reads as 02:30 CET.
    expect(fromZonedInput("2026-03-29T02:30", "Europe/Berlin")?.toISOString()).toBe("2026-03-29T01:30:00.000Z");
  });
});

describe("time zone names", () => {
  it("knows IANA names and UTC, and not Mars/Olympus", () => {
    expect(isTimeZone("Europe/Berlin")).toBe(true);
    expect(isTimeZone("America/New_York")).toBe(true);
    expect(isTimeZone("UTC")).toBe(true);
    expect(isTimeZone("Mars/Olympus")).toBe(false);
    expect(isTimeZone("")).toBe(false);
  });
});

describe("durations", () => {
  it("one rule: seconds, then minutes, then hours, to one decimal", () => {
    expect(formatDuration(45)).toBe("45 s");
    expect(formatDuration(4.56)).toBe("4.6 s");
    expect(formatDuration(588)).toBe("9.8 min");
    expect(formatDuration(600)).toBe("10 min");
    expect(formatDuration(9000)).toBe("2.5 h");
    expect(formatDuration(null)).toBe("—");
  });
});

describe("calendar days", () => {
  it("adds days across a month's and a year's end, and finds the week's Monday", () => {
    expect(addDays("2026-12-30", 3)).toBe("2027-01-02");
    expect(addDays("2027-03-01", -1)).toBe("2027-02-28");
    expect(mondayOf("2026-12-07")).toBe("2026-12-07");
    expect(mondayOf("2026-12-13")).toBe("2026-12-07");
    expect(mondayOf("2027-01-01")).toBe("2026-12-28");
  });
});
