/**
 * The blobs of a thresholded detection image (detect.ts): within each region the threshold
 * marked, an opening and a closing (3 × 3), the outer outlines (OpenCV's findContours), and each
 * outline kept by its box, area and roundness and filled into a label image, so that the centre
 * reads which pixels are the blob's. OpenCV's images stay here: `mask` is what the threshold
 * writes (detection-image size), `labels` holds each kept blob's number.
 */
import type { CvMat, CvRect, OpenCv } from "./opencv-types";
import type { DetectionPlan } from "./plan";

const maxBlobs = 254;

export interface Blob {
  label: number;
  rect: CvRect;
  roundness: number;
  pixels: number;
}

export interface BlobFinder {
  mask: CvMat;
  labels: CvMat;
  blobs: (regions: CvRect[]) => Blob[];
  dispose: () => void;
}

export function createBlobFinder(cv: OpenCv, plan: DetectionPlan): BlobFinder {
  const { smallWidth: sw, smallHeight: sh, shrink: k } = plan;
  const block = k * k;
  const mask = new cv.Mat(sh, sw, cv.CV_8UC1);
  const opened = new cv.Mat(sh, sw, cv.CV_8UC1);
  const labels = new cv.Mat(sh, sw, cv.CV_8UC1);
  const kernel = cv.getStructuringElement(cv.MORPH_RECT, new cv.Size(3, 3));

  /** Opening and closing, then outlines and their filled labels, within each region. */
  function blobs(regions: CvRect[]): Blob[] {
    opened.data.fill(0);
    labels.data.fill(0);
    const found: Blob[] = [];
    let nextLabel = 1;
    for (const region of regions) {
      if (nextLabel > maxBlobs) break;
      const rect = new cv.Rect(region.x, region.y, region.width, region.height);
      const maskRoi = mask.roi(rect);
      const openedRoi = opened.roi(rect);
      const labelsRoi = labels.roi(rect);
      const contours = new cv.MatVector();
      const hierarchy = new cv.Mat(0, 0, cv.CV_8UC1);
      try {
        cv.morphologyEx(maskRoi, openedRoi, cv.MORPH_OPEN, kernel);
        cv.morphologyEx(openedRoi, maskRoi, cv.MORPH_CLOSE, kernel);
        cv.findContours(maskRoi, contours, hierarchy, cv.RETR_EXTERNAL, cv.CHAIN_APPROX_SIMPLE);
        const candidates: { index: number; area: number; perimeter: number; rect: CvRect }[] = [];
        const count = contours.size();
        for (let i = 0; i < count; i++) {
          const contour = contours.get(i);
          try {
            const r = cv.boundingRect(contour);
            // The box bounds the pixel count from above, the outline's area from below.
            if (r.width * r.height * block < plan.minAreaPx) continue;
            const area = cv.contourArea(contour);
            if (area * block > plan.maxAreaPx) continue;
            candidates.push({
              index: i,
              area,
              perimeter: cv.arcLength(contour, true),
              rect: { x: r.x + region.x, y: r.y + region.y, width: r.width, height: r.height },
            });
          } finally {
            contour.delete();
          }
        }
        candidates.sort((a, b) => b.area - a.area);
        candidates.length = Math.min(candidates.length, maxBlobs + 1 - nextLabel);
        const first = nextLabel;
        for (const c of candidates) cv.drawContours(labelsRoi, contours, c.index, new cv.Scalar(nextLabel++), -1);
        const lab = labels.data;
        candidates.forEach((c, n) => {
          const label = first + n;
          let pixels = 0;
          for (let row = c.rect.y; row < c.rect.y + c.rect.height; row++) {
            for (let col = c.rect.x; col < c.rect.x + c.rect.width; col++) {
              if (lab[row * sw + col] === label) pixels++;
            }
          }
          const areaPx = pixels * block;
          if (areaPx < plan.minAreaPx || areaPx > plan.maxAreaPx) return;
          const roundness = c.perimeter > 0 ? (4 * Math.PI * c.area) / (c.perimeter * c.perimeter) : 0;
          if (roundness < plan.minRoundness) return;
          found.push({ label, rect: c.rect, roundness: Math.min(1, roundness), pixels: areaPx });
        });
      } finally {
        contours.delete();
        hierarchy.delete();
        maskRoi.delete();
        openedRoi.delete();
        labelsRoi.delete();
      }
    }
    return found;
  }

  return {
    mask,
    labels,
    blobs,
    dispose() {
      mask.delete();
      opened.delete();
      labels.delete();
      kernel.delete();
    },
  };
}
