import fs from "node:fs";
import path from "node:path";
import type { Page } from "@playwright/test";
import routes from "../../app/routes";

interface RouteEntry {
  path?: string;
  index?: boolean;
  file: string;
  children?: RouteEntry[];
}

/**
 * The app's pages, read from app/routes.ts, so a page added there is not forgotten by the tests:
 * every route whose module exports a component (a default export), outside the API. Resource
 * routes (images, CSV, sign-out's action) have no page to lay out. Each comes with a pattern that
 * matches its addresses (":id" is one path segment, "*" anything).
 */
export function pageRoutes(): { path: string; pattern: RegExp }[] {
  const flat = (list: readonly RouteEntry[]): RouteEntry[] => list.flatMap((r) => [r, ...flat(r.children ?? [])]);
  const appDir = path.resolve(import.meta.dirname, "../../app");
  return flat(routes as readonly RouteEntry[])
    .filter((r) => !(r.path ?? "").startsWith("api/"))
    .filter((r) => /^export default /m.test(fs.readFileSync(path.join(appDir, r.file), "utf8")))
    .map((r) => {
      const p = r.path ?? "";
      const body = p
        .split("/")
        .map((seg) => (seg === "*" ? ".+" : seg.startsWith(":") ? "[^/]+" : seg.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")))
        .join("/");
      return { path: p, pattern: new RegExp(`^/${body}/?$`) };
    });
}

/**
 * Whether the page scrolls sideways at this width: null when `document.documentElement.scrollWidth`
 * fits, else a line naming the page's width and the outermost elements that stick out (the ones
 * to fix; what sits in a box that scrolls on its own is not counted). Charts follow their box a
 * moment after it narrows (Recharts measures it with a ResizeObserver), so a page that is too wide
 * is measured again for up to two seconds before it counts; one that fits costs one measurement.
 */
export async function phoneOverflow(page: Page, width: number): Promise<string | null> {
  let found = await measure(page, width);
  for (let i = 0; found && i < 8; i++) {
    await page.waitForTimeout(250);
    found = await measure(page, width);
  }
  return found;
}

function measure(page: Page, width: number): Promise<string | null> {
  return page.evaluate((w) => {
    const scrollWidth = document.documentElement.scrollWidth;
    if (scrollWidth <= w) return null;
    const culprits: string[] = [];
    const walk = (el: Element) => {
      const style = getComputedStyle(el);
      if (el.getBoundingClientRect().right > w + 0.5) {
        const name = `${el.tagName.toLowerCase()}${el.id ? `#${el.id}` : ""}${el.classList.length ? `.${[...el.classList].slice(0, 4).join(".")}` : ""}`;
        const inner = [...el.children].filter((c) => c.getBoundingClientRect().right > w + 0.5);
        // The outermost element that sticks out while none of its children does, or a scroll box.
        if (inner.length === 0 || /(auto|scroll)/.test(style.overflowX)) {
          culprits.push(`${name} (right edge at ${Math.round(el.getBoundingClientRect().right)} px)`);
          return;
        }
      }
      if (/(auto|scroll)/.test(style.overflowX)) return;
      for (const c of el.children) walk(c);
    };
    walk(document.body);
    return `the page is ${scrollWidth} px wide on a ${w} px screen and scrolls sideways; sticking out: ${culprits.slice(0, 5).join(", ") || "nothing found"}`;
  }, width);
}
