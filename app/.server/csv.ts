import { stringify } from "csv-stringify/sync";

/** A cell as the exports give it: text as written, a number, or nothing (an empty cell). */
export type CsvCell = string | number | null;

/**
 * A CSV document as RFC 4180 describes it: a header line, CRLF after every record, and fields
 * holding a comma, a double quote or a line break quoted, with quotes doubled. csv-stringify does
 * the quoting; numbers are written as given (format them first when digits matter).
 */
export function csvDocument(columns: readonly string[], rows: Iterable<readonly CsvCell[]>): string {
  return stringify(
    Array.from(rows, (row) => [...row]),
    { header: true, columns: [...columns], record_delimiter: "windows" },
  );
}
