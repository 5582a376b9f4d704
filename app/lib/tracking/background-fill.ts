/**
 * A background's pixels that too few samples saw free of the tracer, filled in from the pixels
 * round them (the stack's median background, background.ts, leaves them to this).
 */

/** fillFromSurroundings for each channel of an interleaved image. */
export function fillChannelsFromSurroundings(background: Uint8Array, used: Uint8Array, width: number, channels: number, minUsed: number): number {
  if (channels === 1) return fillFromSurroundings(background, used, width, minUsed);
  const pixels = used.length;
  const plane = new Uint8Array(pixels);
  let filled = 0;
  for (let c = 0; c < channels; c++) {
    for (let p = 0; p < pixels; p++) plane[p] = background[p * channels + c]!;
    filled = fillFromSurroundings(plane, used, width, minUsed);
    if (filled === 0) return 0;
    for (let p = 0; p < pixels; p++) background[p * channels + c] = plane[p]!;
  }
  return filled;
}

/** Fewest float-free samples whose median is trusted; fewer, and the background is filled in. */
export function minimumFreeSamples(samples: number): number {
  return Math.max(3, Math.ceil(samples / 3));
}

/**
 * Where fewer than `minUsed` samples were free of the float (a slow float on a short stack
 * covers the same pixels in most of them), the median is either still the float's or too noisy,
 * and its noise would be the same in every frame, so the centroid's error would follow the
 * float's position. There the background is filled in from its surroundings instead: the
 * harmonic interpolation (Laplace's equation with the surrounding background as the boundary),
 * exact for the smooth illumination of the water and far less noisy. Solved by successive
 * over-relaxation; the image edge is a mirror.
 */
export function fillFromSurroundings(background: Uint8Array, used: Uint8Array, width: number, minUsed: number): number {
  const height = Math.floor(background.length / width);
  const unknown: number[] = [];
  for (let p = 0; p < width * height; p++) if (used[p]! < minUsed) unknown.push(p);
  if (unknown.length === 0 || unknown.length === width * height) return 0;
  const value = Float32Array.from(background);
  const isUnknown = new Uint8Array(width * height);
  for (const p of unknown) isUnknown[p] = 1;
  // Start from the nearest known values (breadth first), so the relaxation only smooths.
  let front = unknown.filter((p) => hasKnownNeighbour(p));
  const pending = Uint8Array.from(isUnknown);
  for (const p of front) pending[p] = 2;
  while (front.length > 0) {
    const next: number[] = [];
    for (const p of front) {
      let sum = 0;
      let k = 0;
      forNeighbours(p, (q) => {
        if (pending[q] === 0) {
          sum += value[q]!;
          k++;
        } else if (pending[q] === 1) {
          pending[q] = 2;
          next.push(q);
        }
      });
      if (k > 0) value[p] = sum / k;
    }
    for (const p of front) pending[p] = 0;
    front = next;
  }
  const omega = 1.85;
  for (let iter = 0; iter < 2000; iter++) {
    let change = 0;
    for (const p of unknown) {
      let sum = 0;
      let k = 0;
      forNeighbours(p, (q) => {
        sum += value[q]!;
        k++;
      });
      const step = omega * (sum / k - value[p]!);
      value[p]! += step;
      change = Math.max(change, Math.abs(step));
    }
    if (change < 0.01) break;
  }
  for (const p of unknown) background[p] = Math.min(255, Math.max(0, Math.round(value[p]!)));
  return unknown.length;

  function hasKnownNeighbour(p: number): boolean {
    let known = false;
    forNeighbours(p, (q) => {
      if (!isUnknown[q]) known = true;
    });
    return known;
  }
  function forNeighbours(p: number, visit: (q: number) => void): void {
    const col = p % width;
    if (col > 0) visit(p - 1);
    if (col < width - 1) visit(p + 1);
    if (p >= width) visit(p - width);
    if (p + width < width * height) visit(p + width);
  }
}
