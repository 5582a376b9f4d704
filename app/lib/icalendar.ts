/**
 * Line folding for iCalendar (RFC 5545 §3.1): a content line is at most 75 octets, not counting the
 * line break; longer lines go on with CRLF and one space, and a fold never splits a UTF-8 character.
 * The `ics` package folds by characters (up to 75 code points, so up to about 300 octets of non-ASCII
 * text), so its output is unfolded and folded again here.
 */

const MAX_OCTETS = 75;
const encoder = new TextEncoder();

/** Folds one unfolded content line. */
export function foldLine(line: string): string {
  if (encoder.encode(line).length <= MAX_OCTETS) return line;
  const parts: string[] = [];
  let current = "";
  let octets = 0;
  // The first line carries 75 octets; each continuation line starts with a space, so 74 more.
  let limit = MAX_OCTETS;
  for (const ch of line) {
    const size = encoder.encode(ch).length;
    if (octets + size > limit) {
      parts.push(current);
      current = "";
      octets = 0;
      limit = MAX_OCTETS - 1;
    }
    current += ch;
    octets += size;
  }
  parts.push(current);
  return parts.join("\r\n ");
}

/** Undoes folding (CRLF followed by a space or a tab), as RFC 5545 §3.1 reads it. */
export function unfold(text: string): string {
  return text.replace(/\r\n[ \t]/g, "");
}

/** A whole iCalendar object with every line folded at 75 octets and CRLF line ends. */
export function foldIcsLines(text: string): string {
  const lines = unfold(text.replace(/\r?\n/g, "\r\n")).split("\r\n");
  const body = lines.map(foldLine).join("\r\n");
  return body.endsWith("\r\n") ? body : `${body}\r\n`;
}
