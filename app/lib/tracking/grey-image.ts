/** One-channel images for the rate read from the footage: conversion and bilinear sampling. */

export interface GreyImage {
  width: number;
  height: number;
  /** Row-major brightness, one value per pixel. */
  data: Uint8Array | Float32Array;
}

/** Luma (ITU-R BT.601 weights, common practice) of interleaved RGB bytes. */
export function rgbToGrey(rgb: Uint8Array, width: number, height: number): GreyImage {
  const data = new Float32Array(width * height);
  for (let p = 0, q = 0; p < data.length; p++, q += 3) data[p] = 0.299 * rgb[q]! + 0.587 * rgb[q + 1]! + 0.114 * rgb[q + 2]!;
  return { width, height, data };
}

/** Brightness at a fractional pixel position (pixel centres at integers); NaN outside the image. */
export function sampleBilinear(image: GreyImage, x: number, y: number): number {
  const { width: w, height: h, data } = image;
  if (!(x >= 0 && y >= 0 && x <= w - 1 && y <= h - 1)) return Number.NaN;
  const x0 = Math.min(w - 2, Math.floor(x));
  const y0 = Math.min(h - 2, Math.floor(y));
  const fx = x - x0;
  const fy = y - y0;
  const p = y0 * w + x0;
  const top = data[p]! + (data[p + 1]! - data[p]!) * fx;
  const bottom = data[p + w]! + (data[p + w + 1]! - data[p + w]!) * fx;
  return top + (bottom - top) * fy;
}

/**
 * The vertex of the parabola through three samples at −1, 0, +1 (the middle one the largest):
 * the sub-sample offset of a peak, in (−½, ½).
 */
export function parabolicPeak(left: number, centre: number, right: number): number {
  const denominator = left - 2 * centre + right;
  if (!(denominator < 0)) return 0;
  const offset = (0.5 * (left - right)) / denominator;
  return Math.max(-0.5, Math.min(0.5, offset));
}
