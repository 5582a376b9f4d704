/**
 * The few OpenCV calls the detector makes. opencv-wasm types nearly everything as `any`, so the
 * detector states what it relies on here and takes the loaded module as a parameter: the library
 * stays free of loading concerns, and the worker and tests pass in the same build.
 */

export interface CvRect {
  x: number;
  y: number;
  width: number;
  height: number;
}

export interface CvMat {
  rows: number;
  cols: number;
  /** A fresh view of the wasm heap on every read: fetch again after any OpenCV call. */
  readonly data: Uint8Array;
  roi(rect: CvRect): CvMat;
  delete(): void;
}

export interface CvMatVector {
  size(): number;
  get(index: number): CvMat;
  delete(): void;
}

export interface OpenCv {
  Mat: new (rows: number, cols: number, type: number) => CvMat;
  MatVector: new () => CvMatVector;
  Size: new (width: number, height: number) => unknown;
  Rect: new (x: number, y: number, width: number, height: number) => CvRect;
  Scalar: new (...values: number[]) => unknown;
  CV_8UC1: number;
  MORPH_RECT: number;
  MORPH_OPEN: number;
  MORPH_CLOSE: number;
  RETR_EXTERNAL: number;
  CHAIN_APPROX_SIMPLE: number;
  getStructuringElement(shape: number, size: unknown): CvMat;
  morphologyEx(src: CvMat, dst: CvMat, op: number, kernel: CvMat): void;
  findContours(image: CvMat, contours: CvMatVector, hierarchy: CvMat, mode: number, method: number): void;
  contourArea(contour: CvMat): number;
  arcLength(contour: CvMat, closed: boolean): number;
  boundingRect(contour: CvMat): CvRect;
  drawContours(image: CvMat, contours: CvMatVector, index: number, colour: unknown, thickness: number): void;
}
