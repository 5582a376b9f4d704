import type { ReactNode } from "react";

export function Card({ title, actions, children, className = "" }: { title?: ReactNode; actions?: ReactNode; children: ReactNode; className?: string }) {
  return (
    <section className={`rounded-card border border-line bg-sheet p-5 shadow-sm ${className}`}>
      {title || actions ? (
        <div className="mb-3 flex flex-wrap items-center justify-between gap-3">
          {title ? <h2 className="text-xl">{title}</h2> : <span />}
          {actions}
        </div>
      ) : null}
      {children}
    </section>
  );
}

export function PageHeader({ title, subtitle, actions }: { title: ReactNode; subtitle?: ReactNode; actions?: ReactNode }) {
  return (
    <header className="mb-6 flex flex-wrap items-end justify-between gap-4 border-b-2 border-line pb-4">
      <div>
        <h1>{title}</h1>
        {subtitle ? <p className="mt-1 text-muted">{subtitle}</p> : null}
      </div>
      {actions ? <div className="flex flex-wrap gap-3">{actions}</div> : null}
    </header>
  );
}

export function Tag({ children, tone = "neutral" }: { children: ReactNode; tone?: "neutral" | "agrees" | "disagrees" | "inconclusive" | "caution" | "tank" }) {
  const tones = {
    neutral: "bg-paper text-ink border-line-strong",
    agrees: "bg-agrees-bg text-agrees-ink border-agrees-ink",
    disagrees: "bg-disagrees-bg text-disagrees-ink border-disagrees-ink",
    inconclusive: "bg-inconclusive-bg text-inconclusive-ink border-inconclusive-ink",
    caution: "bg-caution-bg text-caution-ink border-caution-line",
    tank: "bg-tank-50 text-tank-800 border-tank-600",
  } as const;
  return <span className={`inline-block rounded-md border px-2 py-0.5 text-sm font-bold ${tones[tone]}`}>{children}</span>;
}
