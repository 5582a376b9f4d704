import sharp from "sharp";
import { Frame, Track } from "../db";
import { frameKey, MissingObjectError, runKey, store } from "../storage";
import { parseTrackPoints } from "./theory";

const palette = ["#ffd23f", "#3ee0cf", "#ff6b9a", "#9be564", "#c3a6ff", "#ff9f40"];

/**
 * The run's middle frame with every track drawn over it (sharp composing an SVG) as PNG bytes,
 * made once per tracking job and kept beside the frames; null when the run has no frames. Throws
 * MissingObjectError when the middle frame's file is missing from storage.
 */
export async function trackOverlay(runId: number, jobId: number): Promise<Buffer | null> {
  const key = runKey(runId, `overlay-${jobId}.png`);
  const made = await store().get(key);
  if (made) return made;
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
      const start = pts[0]!;
      return `<path d="${d}" fill="none" stroke="#000" stroke-opacity="0.55" stroke-width="${stroke + 2}"/>
<path d="${d}" fill="none" stroke="${colour}" stroke-width="${stroke}"/>
<circle cx="${start.x}" cy="${start.y}" r="${stroke * 3}" fill="${colour}" stroke="#000" stroke-width="1"/>
<text x="${start.x + stroke * 4}" y="${start.y - stroke * 4}" font-family="sans-serif" font-weight="bold" font-size="${stroke * 9}" fill="${colour}" stroke="#000" stroke-width="1">${t.number}</text>`;
    })
    .join("\n");
  const svg = Buffer.from(`<svg xmlns="http://www.w3.org/2000/svg" width="${w}" height="${h}" viewBox="0 0 ${w} ${h}">${paths}</svg>`);
  const imageKey = frameKey(frame);
  const image = await store().get(imageKey);
  if (!image) throw new MissingObjectError(imageKey, store().where);
  const png = await sharp(image)
    .composite([{ input: svg, top: 0, left: 0 }])
    .resize({ width: Math.min(w, 1280), withoutEnlargement: true })
    .png({ compressionLevel: 8 })
    .toBuffer();
  // Two requests at once may both draw it; the second write replaces the first with the same picture.
  await store().put(key, png, "image/png");
  return png;
}
