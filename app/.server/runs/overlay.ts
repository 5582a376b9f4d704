import fs from "node:fs/promises";
import sharp from "sharp";
import { Frame, Track } from "../db";
import { runFilePath, writeRunFile } from "../uploads/storage";
import { parseTrackPoints } from "./theory";

const palette = ["#ffd23f", "#3ee0cf", "#ff6b9a", "#9be564", "#c3a6ff", "#ff9f40"];

/**
 * The run's middle frame with every track drawn over it (sharp composing an SVG), made once per
 * tracking job and kept beside the frames.
 */
export async function trackOverlay(runId: number, jobId: number): Promise<string | null> {
  const name = `overlay-${jobId}.png`;
  const file = runFilePath(runId, name);
  try {
    await fs.access(file);
    return file;
  } catch {
    // not made yet
  }
  const count = await Frame.count({ where: { runId } });
  if (!count) return null;
  const frame = await Frame.findOne({ where: { runId, position: Math.floor(count / 2) } });
  if (!frame) return null;
  const tracks = await Track.findAll({ where: { runId, jobId }, order: [["number", "ASC"]] });
  const w = frame.widthPx;
  const h = frame.heightPx;
  const stroke = Math.max(2, Math.round(Math.min(w, h) / 300));
  const paths = tracks
    .map((t, i) => {
      const pts = parseTrackPoints(t);
      if (!pts.length) return "";
      const colour = palette[i % palette.length];
      const d = pts.map((p, j) => `${j ? "L" : "M"}${p.x.toFixed(1)},${p.y.toFixed(1)}`).join(" ");
      const start = pts[0];
      return `<path d="${d}" fill="none" stroke="#000" stroke-opacity="0.55" stroke-width="${stroke + 2}"/>
<path d="${d}" fill="none" stroke="${colour}" stroke-width="${stroke}"/>
<circle cx="${start.x}" cy="${start.y}" r="${stroke * 3}" fill="${colour}" stroke="#000" stroke-width="1"/>
<text x="${start.x + stroke * 4}" y="${start.y - stroke * 4}" font-family="sans-serif" font-weight="bold" font-size="${stroke * 9}" fill="${colour}" stroke="#000" stroke-width="1">${t.number}</text>`;
    })
    .join("\n");
  const svg = Buffer.from(`<svg xmlns="http://www.w3.org/2000/svg" width="${w}" height="${h}" viewBox="0 0 ${w} ${h}">${paths}</svg>`);
  const png = await sharp(runFilePath(runId, frame.storedName))
    .composite([{ input: svg, top: 0, left: 0 }])
    .resize({ width: Math.min(w, 1280), withoutEnlargement: true })
    .png({ compressionLevel: 8 })
    .toBuffer();
  await writeRunFile(runId, name, png).catch(async (err: NodeJS.ErrnoException) => {
    if (err.code !== "EEXIST") throw err;
  });
  return file;
}
