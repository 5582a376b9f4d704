import type { ReactNode } from "react";

/** A record's facts: terms on the left, what each says on the right. */
export function Facts({ children, className = "" }: { children: ReactNode; className?: string }) {
  return <dl className={`grid grid-cols-[auto_1fr] gap-x-6 gap-y-2 ${className}`}>{children}</dl>;
}

/** One row of `Facts`. */
export function Fact({ label, children }: { label: string; children: ReactNode }) {
  return (
    <div className="contents">
      <dt className="font-bold">{label}</dt>
      <dd>{children}</dd>
    </div>
  );
}

/** `Facts` from label–value pairs; a pair with no value is left out rather than shown blank. */
export function FactRows({ rows }: { rows: readonly (readonly [string, ReactNode])[] }) {
  return (
    <Facts>
      {rows
        .filter(([, value]) => value !== null && value !== undefined && value !== "" && value !== false)
        .map(([label, value]) => (
          <Fact key={label} label={label}>
            {value}
          </Fact>
        ))}
    </Facts>
  );
}
