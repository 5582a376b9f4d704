import type { ButtonHTMLAttributes, AnchorHTMLAttributes } from "react";
import { Link, type LinkProps } from "react-router";

type Tone = "primary" | "plain" | "danger" | "quiet";

const tones: Record<Tone, string> = {
  primary: "bg-tank-700 text-white hover:bg-tank-800 border-tank-800",
  plain: "bg-sheet text-ink hover:bg-tank-50 border-line-strong",
  danger: "bg-sheet text-disagrees-ink hover:bg-disagrees-bg border-disagrees-ink",
  quiet: "bg-transparent text-tank-700 hover:bg-tank-50 border-transparent",
};

export function buttonClass(tone: Tone = "primary", extra = "") {
  // 48 px tall at least: pressed with a wet or gloved finger at the bench.
  return `inline-flex min-h-12 items-center justify-center gap-2 rounded-lg border-2 px-5 py-2 font-bold no-underline transition-colors disabled:cursor-not-allowed disabled:opacity-50 ${tones[tone]} ${extra}`;
}

export function Button({ tone = "primary", className = "", ...props }: ButtonHTMLAttributes<HTMLButtonElement> & { tone?: Tone }) {
  return <button className={buttonClass(tone, className)} {...props} />;
}

export function ButtonLink({ tone = "plain", className = "", ...props }: LinkProps & { tone?: Tone }) {
  return <Link className={buttonClass(tone, className)} {...props} />;
}

export function ButtonA({ tone = "plain", className = "", children, ...props }: AnchorHTMLAttributes<HTMLAnchorElement> & { tone?: Tone }) {
  return (
    <a className={buttonClass(tone, className)} {...props}>
      {children}
    </a>
  );
}
