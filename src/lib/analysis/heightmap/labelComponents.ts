import { maskRuns } from './foregroundRuns';
import { linkRuns } from './linkRuns';
import type { LabelComponentsResult } from './types';

/**
 * Connected components of a binary mask, with per-component statistics: the outputs of OpenCV's
 * `connectedComponentsWithStats` (labels, area, bounding box, centroid), label 0 being the background.
 *
 * Run-based two-pass labelling: the mask is read once into horizontal runs of foreground pixels, runs are linked
 * to the runs they touch in the row above through a union–find whose roots are the smallest labels, and the
 * statistics are summed per run (a run's Σx is closed form), so only the scan and the label fill touch every pixel.
 * Components are numbered 1…nbComponents in raster order of their first pixel (topmost row, then leftmost column).
 *
 * @param mask - row-major, non-zero = foreground
 * @param width - columns (px)
 * @param height - rows (px)
 * @param connectivity - 8 (edge and corner neighbours, the default) or 4 (edge neighbours)
 * @param labelsOut - optional Int32Array of width·height to write the labels into (overwritten entirely) instead of
 *   allocating one: a caller labelling frame after frame then skips 4 bytes/px of fresh memory, as OpenCV does when it
 *   is given its output matrix
 * @returns labels and statistics; see {@link LabelComponentsResult}
 * @throws RangeError for a malformed size, mask, connectivity or labelsOut
 * @see Rosenfeld A, Pfaltz JL 1966, J ACM 13(4):471–494 (two-pass labelling)
 * @see He L, Chao Y, Suzuki K 2008, IEEE Trans Image Process 17(5):749–756, "A run-based two-scan labeling algorithm" (from memory)
 */
export function labelComponents(
  mask: Uint8Array, width: number, height: number, connectivity: 4 | 8 = 8, labelsOut?: Int32Array,
): LabelComponentsResult {
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new RangeError(`mask size must be positive integers, got ${width}×${height}`);
  }
  if (mask.length !== width * height) throw new RangeError(`mask has ${mask.length} pixels, expected width·height = ${width * height}`);
  if (connectivity !== 4 && connectivity !== 8) throw new RangeError(`connectivity must be 4 or 8, got ${connectivity}`);
  if (labelsOut && labelsOut.length !== width * height) throw new RangeError(`labelsOut has ${labelsOut.length} elements, expected width·height = ${width * height}`);
  const { nbRuns, start, end, row, rowFirst } = maskRuns(mask, width, height);
  const runLabel = new Int32Array(nbRuns);
  const nbComponents = linkRuns(start, end, rowFirst, height, connectivity, runLabel);
  const nbLabels = nbComponents + 1;
  const areaPx = new Int32Array(nbLabels);
  const xMin = new Int32Array(nbLabels).fill(width);
  const yMin = new Int32Array(nbLabels).fill(height);
  const xMax = new Int32Array(nbLabels).fill(-1);
  const yMax = new Int32Array(nbLabels).fill(-1);
  const sumX = new Float64Array(nbLabels);
  const sumY = new Float64Array(nbLabels);
  const labels = labelsOut ? labelsOut.fill(0) : new Int32Array(width * height);
  runStats(width, nbRuns, start, end, row, runLabel, areaPx, xMin, yMin, xMax, yMax, sumX, sumY, labels);
  backgroundStats(width, height, start, end, rowFirst, areaPx, xMin, yMin, xMax, yMax, sumX, sumY);
  const centroidX = new Float64Array(nbLabels);
  const centroidY = new Float64Array(nbLabels);
  for (let l = 0; l < nbLabels; l++) {
    centroidX[l] = areaPx[l] > 0 ? sumX[l] / areaPx[l] : Number.NaN;
    centroidY[l] = areaPx[l] > 0 ? sumY[l] / areaPx[l] : Number.NaN;
  }
  return { labels, nbComponents, areaPx, xMin, yMin, xMax, yMax, centroidX, centroidY };
}

/**
 * Statistics of every component from its runs, and the label fill. Arrays in: no short-lived object reaches the
 * optimised loop (see surfaceRow's SurfaceFrame).
 */
function runStats(
  width: number, nbRuns: number, start: Int32Array, end: Int32Array, row: Int32Array, runLabel: Int32Array,
  areaPx: Int32Array, xMin: Int32Array, yMin: Int32Array, xMax: Int32Array, yMax: Int32Array,
  sumX: Float64Array, sumY: Float64Array, labels: Int32Array,
): void {
  for (let k = 0; k < nbRuns; k++) {
    const l = runLabel[k];
    const s = start[k];
    const e = end[k];
    const y = row[k];
    const length = e - s;
    areaPx[l] += length;
    if (s < xMin[l]) xMin[l] = s;
    if (e - 1 > xMax[l]) xMax[l] = e - 1;
    if (y < yMin[l]) yMin[l] = y;
    yMax[l] = y; // runs come in raster order
    sumX[l] += ((s + e - 1) * length) / 2; // exact: integers below 2⁵³
    sumY[l] += y * length;
    labels.fill(l, y * width + s, y * width + e);
  }
}

/**
 * Statistics of label 0 from the runs: the background of a row lies left of its first run, between runs and
 * right of its last run; sums are the whole image's (closed form) minus the foreground's.
 */
function backgroundStats(
  width: number, height: number, start: Int32Array, end: Int32Array, rowFirst: Int32Array, areaPx: Int32Array,
  xMin: Int32Array, yMin: Int32Array, xMax: Int32Array, yMax: Int32Array, sumX: Float64Array, sumY: Float64Array,
): void {
  let fgArea = 0;
  let fgSumX = 0;
  let fgSumY = 0;
  for (let l = 1; l < areaPx.length; l++) {
    fgArea += areaPx[l];
    fgSumX += sumX[l];
    fgSumY += sumY[l];
  }
  areaPx[0] = width * height - fgArea;
  sumX[0] = (height * width * (width - 1)) / 2 - fgSumX;
  sumY[0] = (width * height * (height - 1)) / 2 - fgSumY;
  for (let y = 0; y < height; y++) {
    const first = rowFirst[y];
    const last = rowFirst[y + 1];
    // maximal runs: the row is all foreground only when one run spans it
    if (last - first === 1 && start[first] === 0 && end[first] === width) continue;
    const left = first < last && start[first] === 0 ? end[first] : 0;
    const right = first < last && end[last - 1] === width ? start[last - 1] - 1 : width - 1;
    if (left < xMin[0]) xMin[0] = left;
    if (right > xMax[0]) xMax[0] = right;
    if (y < yMin[0]) yMin[0] = y;
    yMax[0] = y;
  }
}
