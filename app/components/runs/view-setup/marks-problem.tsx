/** What is wrong with a set of tilt marks (rim points, known points), said under them. */
export function MarksProblem({ error, id, testId }: { error: string[] | undefined; id: string; testId: string }) {
  return error?.length ? (
    <p className="text-sm font-bold text-disagrees-ink" role="alert" id={id} data-testid={testId}>
      {error.join(" ")}
    </p>
  ) : null;
}
