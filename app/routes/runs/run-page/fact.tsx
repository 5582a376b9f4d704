/** One row of a run page's facts: a term and what it says, in a two-column definition list. */
export function Fact({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <div className="contents">
      <dt className="font-bold">{label}</dt>
      <dd>{children}</dd>
    </div>
  );
}
