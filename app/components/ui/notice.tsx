import type { ReactNode } from "react";

type Kind = "info" | "caution" | "error" | "success";

const kinds: Record<Kind, { box: string; word: string }> = {
  info: { box: "border-tank-600 bg-tank-50 text-ink", word: "Note" },
  caution: { box: "border-caution-line bg-caution-bg text-caution-ink", word: "Caution" },
  error: { box: "border-disagrees-ink bg-disagrees-bg text-disagrees-ink", word: "Problem" },
  success: { box: "border-agrees-ink bg-agrees-bg text-agrees-ink", word: "Done" },
};

/** A boxed message; it always carries a word (Caution, Problem…) so colour is never the only signal. */
export function Notice({ kind = "info", title, children }: { kind?: Kind; title?: ReactNode; children?: ReactNode }) {
  const k = kinds[kind];
  return (
    <div role={kind === "error" ? "alert" : "status"} className={`rounded-card border-l-8 px-4 py-3 ${k.box}`}>
      <p className="font-bold">{title ?? k.word}</p>
      {children ? <div className="mt-1">{children}</div> : null}
    </div>
  );
}

/** A form's own error (not tied to one field), shown above the fields; nothing when there is none. */
export function FormProblem({ errors, className }: { errors: string[] | undefined; className?: string }) {
  if (!errors?.length) return null;
  return (
    <div className={className}>
      <Notice kind="error" title={errors[0]} />
    </div>
  );
}
