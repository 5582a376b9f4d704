import { describe, expect, it } from "vitest";
import { foldIcsLines, foldLine, unfold } from "./icalendar";

const octets = (s: string) => new TextEncoder().encode(s).length;

describe("iCalendar line folding (RFC 5545 §3.1: 75 octets, CRLF and a space, never inside a UTF-8 character)", () => {
  it("leaves a short line alone and folds a long ASCII line at exactly 75 octets", () => {
    expect(foldLine("SUMMARY:short")).toBe("SUMMARY:short");
    const long = `DESCRIPTION:${"a".repeat(200)}`;
    const lines = foldLine(long).split("\r\n");
    // 212 octets: 75 on the first line, then a space and 74 more on each continuation.
    expect(lines.map(octets)).toEqual([75, 75, 64]);
    expect(lines.slice(1).every((l) => l.startsWith(" "))).toBe(true);
    expect(unfold(foldLine(long))).toBe(long);
  });

  it("counts octets, not characters: Ø (2 octets), — (3) and 🌀 (4) are never split", () => {
    const long = `SUMMARY:${"Ø—🌀x".repeat(30)}`;
    const folded = foldLine(long);
    for (const line of folded.split("\r\n")) {
      expect(octets(line)).toBeLessThanOrEqual(75);
      expect(line).not.toContain("\uFFFD");
      // A lone surrogate would mean an astral character was cut in two.
      expect(/[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/.test(line)).toBe(false);
    }
    expect(unfold(folded)).toBe(long);
  });

  it("refolds a whole object folded by characters with tabs, and ends every line with CRLF", () => {
    const byChars = `BEGIN:VCALENDAR\r\nSUMMARY:${"Ø".repeat(74)}\r\n\t${"Ø".repeat(20)}\r\nEND:VCALENDAR`;
    const out = foldIcsLines(byChars);
    expect(out.endsWith("END:VCALENDAR\r\n")).toBe(true);
    expect(Math.max(...out.split("\r\n").map(octets))).toBeLessThanOrEqual(75);
    expect(unfold(out)).toBe(`BEGIN:VCALENDAR\r\nSUMMARY:${"Ø".repeat(94)}\r\nEND:VCALENDAR\r\n`);
  });
});
