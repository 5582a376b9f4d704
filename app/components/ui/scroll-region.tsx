import type { ReactNode } from "react";

/**
 * A wide table's box that scrolls sideways on a narrow screen. It can take focus and has a name,
 * so someone on a keyboard can scroll it with the arrow keys (WCAG 2.1.1; axe's
 * scrollable-region-focusable) when it holds nothing else that takes focus.
 */
export function ScrollRegion({ label, children }: { label: string; children: ReactNode }) {
  return (
    // eslint-disable-next-line jsx-a11y/no-noninteractive-tabindex -- a scrolling box must be reachable by keyboard to be scrolled
    <div role="region" aria-label={label} tabIndex={0} className="relative overflow-x-auto">
      {children}
    </div>
  );
}
