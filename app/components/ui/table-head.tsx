import type { ReactNode } from "react";

/**
 * A plain (non-sorting) table's header row. `compact` for tables inside a card's detail, `spaced`
 * keeps a gap right of every column but the last (tables whose cells run into each other).
 */
export function TableHead({ columns, compact = false, spaced = true }: { columns: readonly ReactNode[]; compact?: boolean; spaced?: boolean }) {
  const pad = compact ? "py-1" : "py-2";
  return (
    <thead>
      <tr className="border-b-2 border-line">
        {columns.map((column, i) => (
          <th key={i} className={spaced && i < columns.length - 1 ? `${pad} pr-3` : pad}>
            {column}
          </th>
        ))}
      </tr>
    </thead>
  );
}
