import { describe, expect, it } from "vitest";
import { csvDocument } from "./csv";

/** Fields of an RFC 4180 document (section 2): CRLF between records, "" for a quote inside quotes. */
function parseRfc4180(text: string): string[][] {
  const records: string[][] = [];
  let record: string[] = [];
  let field = "";
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (quoted) {
      if (c !== '"') field += c;
      else if (text[i + 1] === '"') {
        field += '"';
        i++;
      } else quoted = false;
    } else if (c === '"' && field === "") {
      quoted = true;
    } else if (c === ",") {
      record.push(field);
      field = "";
    } else if (c === "\r" && text[i + 1] === "\n") {
      record.push(field);
      records.push(record);
      record = [];
      field = "";
      i++;
    } else if (c === '"' || c === "\r" || c === "\n") {
      throw new Error(`bare ${JSON.stringify(c)} at ${i}: not RFC 4180`);
    } else {
      field += c;
    }
  }
  if (field !== "" || record.length) throw new Error("the last record does not end in CRLF");
  return records;
}

describe("CSV documents (RFC 4180)", () => {
  it("quotes a text field with a comma, a double quote and a line break, and it reads back as written", () => {
    const awkward = 'Float "B", re-cut\nafter the spill';
    const csv = csvDocument(
      ["track_id", "note", "x_px"],
      [
        [12, awkward, 640.5],
        [13, "plain", null],
      ],
    );
    expect(csv).toBe('track_id,note,x_px\r\n12,"Float ""B"", re-cut\nafter the spill",640.5\r\n13,plain,\r\n');
    expect(parseRfc4180(csv)).toEqual([
      ["track_id", "note", "x_px"],
      ["12", awkward, "640.5"],
      ["13", "plain", ""],
    ]);
  });

  it("writes the header alone when there are no rows", () => {
    expect(csvDocument(["a", "b"], [])).toBe("a,b\r\n");
  });
});
