import { useLayoutEffect, useRef, useState } from "react";
import type { Point } from "~/lib/geometry";

/** How far the frame can be enlarged: at 8× a 1280 px frame on a 315 px phone shows about 2 image px per screen px. */
export const maxZoom = 8;

/**
 * The frame's zoom and scrolling: zooming keeps `keep` (the selected mark) or the middle of what is
 * shown in view, and a moved mark is scrolled into view after the render that moves it.
 */
export function useFrameZoom(width: number, height: number) {
  const [zoom, setZoom] = useState<number>(1);
  const viewport = useRef<HTMLDivElement>(null);
  // Where the zoomed frame should scroll once the next render has laid it out at its new size.
  const pendingView = useRef<{ p: Point; centre: boolean } | null>(null);
  useLayoutEffect(() => {
    const want = pendingView.current;
    const box = viewport.current;
    pendingView.current = null;
    if (!want || !box) return;
    const x = (want.p.x / width) * box.scrollWidth;
    const y = (want.p.y / height) * box.scrollHeight;
    const margin = 24;
    if (want.centre || x < box.scrollLeft + margin || x > box.scrollLeft + box.clientWidth - margin) box.scrollLeft = x - box.clientWidth / 2;
    if (want.centre || y < box.scrollTop + margin || y > box.scrollTop + box.clientHeight - margin) box.scrollTop = y - box.clientHeight / 2;
  });

  /** Scrolls the zoomed frame so p is in view (centred when `centre`) after the render this change causes. */
  function bringIntoView(p: Point | null, centre: boolean) {
    pendingView.current = p ? { p, centre } : null;
  }

  function zoomTo(next: number, keep: Point | null) {
    const z = Math.min(maxZoom, Math.max(1, next));
    if (z === zoom) return;
    const box = viewport.current;
    // Keep the selected mark in the middle, else the middle of what is shown now.
    const middle = box
      ? { x: ((box.scrollLeft + box.clientWidth / 2) / box.scrollWidth) * width, y: ((box.scrollTop + box.clientHeight / 2) / box.scrollHeight) * height }
      : null;
    setZoom(z);
    bringIntoView(keep ?? middle, true);
  }

  return { zoom, zoomTo, viewport, bringIntoView };
}
