/** Colour in OpenCV's 8-bit HSV, as the dye's colour range is given. */

/** OpenCV's 8-bit HSV: hue 0–180, saturation and value 0–255, written into `out`. */
export function hsv(r: number, g: number, b: number, out: Float64Array): void {
  const v = Math.max(r, g, b);
  const m = Math.min(r, g, b);
  const d = v - m;
  out[2] = v;
  out[1] = v === 0 ? 0 : (255 * d) / v;
  let h = 0;
  if (d > 0) {
    if (v === r) h = (60 * (g - b)) / d;
    else if (v === g) h = 120 + (60 * (b - r)) / d;
    else h = 240 + (60 * (r - g)) / d;
    if (h < 0) h += 360;
  }
  out[0] = h / 2;
}

/** Whether a hue lies in the range; hueMin > hueMax wraps through red. */
export function hueInRange(h: number, hueMin: number, hueMax: number): boolean {
  return hueMin <= hueMax ? h >= hueMin && h <= hueMax : h >= hueMin || h <= hueMax;
}
