// Developer aid: signs in as a demo person and saves full-page screenshots of the given paths.
// node scripts/screenshots.mjs <baseUrl> <email|-> <outDir> <path> [path...]
import { chromium } from "@playwright/test";
import fs from "node:fs";

const [base, email, outDir, ...paths] = process.argv.slice(2);
fs.mkdirSync(outDir, { recursive: true });
const browser = await chromium.launch({
  executablePath: "/usr/bin/chromium",
  args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
});
const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
page.on("console", (m) => {
  if (m.type() === "error") console.error("console:", m.text());
});
page.on("pageerror", (e) => console.error("pageerror:", e.message));
if (email !== "-") {
  await page.goto(`${base}/sign-in`);
  await page.fill('input[name="email"]', email);
  await page.fill('input[name="password"]', "tankside-demo");
  await Promise.all([page.waitForURL((u) => !u.pathname.startsWith("/sign-in")), page.click('button[type="submit"]')]);
}
for (const p of paths) {
  await page.goto(`${base}${p}`);
  await page.waitForLoadState("networkidle");
  const name = p.replace(/[^a-z0-9]+/gi, "_").replace(/^_|_$/g, "") || "home";
  await page.screenshot({ path: `${outDir}/${name}.png`, fullPage: true });
  console.log(`${outDir}/${name}.png`);
}
await browser.close();
