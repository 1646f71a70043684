import type { Raster } from '../types';
import type { DetectedRegion, DetectVesiclesOptions, DetectVesiclesResult } from './types';
import { validateRaster } from './validateRaster';

const NB_LEVELS = 1 << 16;
const NEIGHBOUR_DX = [-1, 0, 1, -1, 1, -1, 0, 1];
const NEIGHBOUR_DY = [-1, -1, -1, 0, 0, 1, 1, 1];

/**
 * Find vesicles in a levelled height map: foreground = heights above the threshold, split into
 * regions by a watershed on height (8-connectivity), then filtered. The watershed floods
 * foreground pixels from the highest down (a priority flood by sorting) and keeps a union–find of
 * basins; when a pixel joins two basins, the lower peak keeps its own basin only if it rises at
 * least `minProminenceNm` above this saddle and lies `minSeparationPx` or more from the higher
 * peak, otherwise the basins merge. Regions touching the border, smaller than `minAreaPx` or
 * lower than `minHeightNm` are dropped; regions higher than `beadMinHeightNm` are returned as
 * fiducial candidates. Written here rather than taken from image-js because its watershed works
 * on integer images, and a linear-time flood of the foreground only is what the speed budget needs.
 *
 * @param levelled - levelled heights (nm), background near 0
 * @param options - threshold (nm) and filters; see {@link DetectVesiclesOptions}
 * @returns label map, vesicles and fiducial candidates ordered by peak position (row, then column), diagnostics
 * @throws RangeError for a malformed raster or a non-finite threshold
 * @see Beucher S, Lantuéjoul C 1979, Int Workshop on Image Processing, Rennes (watershed)
 * @see Edelsbrunner H, Letscher D, Zomorodian A 2002, Discrete Comput Geom 28:511–533 (persistence: the younger peak merges at the saddle)
 */
export function detectVesicles(levelled: Raster, options: DetectVesiclesOptions): DetectVesiclesResult {
  const {
    thresholdNm, minProminenceNm = 2, minSeparationPx = 3, minAreaPx = 9, minHeightNm = 2,
    beadMinHeightNm = 300, dropEdgeRegions = true,
  } = options;
  validateRaster(levelled, 'levelled');
  if (!Number.isFinite(thresholdNm)) throw new RangeError(`thresholdNm must be finite, got ${thresholdNm}`);
  const { data, width, height } = levelled;
  const n = width * height;
  const labels = new Int32Array(n);

  // foreground, listed in raster order in the front of `labels` (filled with labels only at the end), so the
  // passes below touch foreground pixels only
  const foreground = labels;
  let m = 0;
  let hMax = -Infinity;
  for (let i = 0; i < n; i++) {
    const h = data[i];
    if (h > thresholdNm) {
      foreground[m++] = i;
      if (h > hMax) hMax = h;
    }
  }
  const emptyDiagnostics = { thresholdNm, nbForegroundPx: m, nbRegions: 0, nbSplits: 0, nbDroppedEdge: 0, nbDroppedSmall: 0, nbDroppedLow: 0 };
  if (m === 0) return { labels, width, height, vesicles: [], fiducialCandidates: [], diagnostics: emptyDiagnostics };

  const order = orderByHeight(data, labels, m, thresholdNm, hMax);

  const { parent, component } = flood(data, width, height, order, minProminenceNm, minSeparationPx);

  // region statistics, indexed by root rank
  const area = new Int32Array(m);
  const xMin = new Int32Array(m).fill(width);
  const yMin = new Int32Array(m).fill(height);
  const xMax = new Int32Array(m).fill(-1);
  const yMax = new Int32Array(m).fill(-1);
  const touchesEdge = new Uint8Array(m);
  const peakOf = new Int32Array(m); // highest pixel (the basin's first pixel is only highest up to the quantisation)
  const rootOf = new Int32Array(m);
  for (let r = 0; r < m; r++) {
    const root = find(parent, r);
    rootOf[r] = root;
    const p = order[r];
    const x = p % width;
    const y = (p - x) / width;
    if (area[root] === 0 || data[p] > data[peakOf[root]]) peakOf[root] = p;
    area[root]++;
    if (x < xMin[root]) xMin[root] = x;
    if (x > xMax[root]) xMax[root] = x;
    if (y < yMin[root]) yMin[root] = y;
    if (y > yMax[root]) yMax[root] = y;
    if (x === 0 || y === 0 || x === width - 1 || y === height - 1) touchesEdge[root] = 1;
  }
  const regionRoots: number[] = [];
  let nbComponents = 0;
  for (let r = 0; r < m; r++) {
    if (parent[r] === r) regionRoots.push(r);
    if (find(component, r) === r) nbComponents++;
  }
  regionRoots.sort((a, b) => order[a] - order[b]);

  // filter and label
  const labelOfRoot = new Int32Array(m);
  const vesicles: DetectedRegion[] = [];
  const fiducialCandidates: DetectedRegion[] = [];
  let nbDroppedEdge = 0;
  let nbDroppedSmall = 0;
  let nbDroppedLow = 0;
  let nextLabel = 1;
  for (const root of regionRoots) {
    const peak = peakOf[root];
    const maxHeightNm = data[peak];
    if (dropEdgeRegions && touchesEdge[root]) { nbDroppedEdge++; continue; }
    if (area[root] < minAreaPx) { nbDroppedSmall++; continue; }
    if (maxHeightNm < minHeightNm) { nbDroppedLow++; continue; }
    const label = nextLabel++;
    labelOfRoot[root] = label;
    const region: DetectedRegion = {
      label, areaPx: area[root], maxHeightNm,
      peakPx: { x: peak % width, y: Math.floor(peak / width) },
      xMin: xMin[root], yMin: yMin[root], xMax: xMax[root], yMax: yMax[root],
    };
    (maxHeightNm > beadMinHeightNm ? fiducialCandidates : vesicles).push(region);
  }
  for (let r = 0; r < m; r++) labels[order[r]] = labelOfRoot[rootOf[r]];

  return {
    labels, width, height, vesicles, fiducialCandidates,
    diagnostics: {
      thresholdNm, nbForegroundPx: m, nbRegions: regionRoots.length, nbSplits: regionRoots.length - nbComponents,
      nbDroppedEdge, nbDroppedSmall, nbDroppedLow,
    },
  };
}

/**
 * Foreground pixels (listed in raster order in foreground[0..m), which is cleared on return) ordered by height,
 * descending, ties in raster order.
 */
function orderByHeight(data: Float32Array, foreground: Int32Array, m: number, thresholdNm: number, hMax: number): Int32Array {
  // order foreground by height, descending: counting sort on heights quantised to NB_LEVELS steps
  // between the threshold and the maximum (ties in raster order). Linear time; the quantisation step
  // (range/65 536, e.g. 0.006 nm for a 400 nm bead) is far below AFM noise.
  const range = hMax - thresholdNm || 1;
  const scale = (NB_LEVELS - 1) / range;
  const starts = new Int32Array(NB_LEVELS + 1);
  for (let k = 0; k < m; k++) starts[Math.floor((hMax - data[foreground[k]]) * scale) + 1]++;
  for (let b = 0; b < NB_LEVELS; b++) starts[b + 1] += starts[b];
  const order = new Int32Array(m);
  for (let k = 0; k < m; k++) {
    const i = foreground[k];
    order[starts[Math.floor((hMax - data[i]) * scale)]++] = i;
  }
  foreground.fill(0, 0, m);
  return order;
}

/**
 * Priority flood of the foreground in `order`: returns, per rank, the union–find parents of basins (merged by
 * the prominence and separation rules) and of connected components.
 */
function flood(
  data: Float32Array, width: number, height: number, order: Int32Array, minProminenceNm: number, minSeparationPx: number,
): { parent: Int32Array; component: Int32Array } {
  const n = width * height;
  const m = order.length;
  // flood; a basin's id is the rank of its peak, so the root of a set is its highest peak
  const idOf = new Int32Array(n); // rank + 1 of each flooded pixel, 0 before it is reached
  const parent = new Int32Array(m);
  const component = new Int32Array(m); // union of everything that touched: connected components
  const roots = new Int32Array(8);
  const minSep2 = minSeparationPx * minSeparationPx;
  for (let r = 0; r < m; r++) {
    const p = order[r];
    idOf[p] = r + 1;
    const x = p % width;
    const y = (p - x) / width;
    let nbRoots = 0;
    let bestHeight = -Infinity;
    let bestRoot = -1;
    for (let k = 0; k < 8; k++) {
      const qx = x + NEIGHBOUR_DX[k];
      const qy = y + NEIGHBOUR_DY[k];
      if (qx < 0 || qy < 0 || qx >= width || qy >= height) continue;
      const q = qy * width + qx;
      const id = idOf[q] - 1;
      if (id < 0 || q === p) continue;
      const root = find(parent, id);
      if (data[q] > bestHeight) {
        bestHeight = data[q];
        bestRoot = root;
      }
      let seen = false;
      for (let s = 0; s < nbRoots; s++) if (roots[s] === root) seen = true;
      if (!seen) roots[nbRoots++] = root;
    }
    if (nbRoots === 0) {
      parent[r] = r;
      component[r] = r;
      continue;
    }
    let oldest = roots[0];
    for (let s = 1; s < nbRoots; s++) if (roots[s] < oldest) oldest = roots[s];
    const oldestPeak = order[oldest];
    const ox = oldestPeak % width;
    const oy = (oldestPeak - ox) / width;
    for (let s = 0; s < nbRoots; s++) {
      const root = roots[s];
      if (root === oldest) continue;
      const cRoot = find(component, root);
      const cOld = find(component, oldest);
      if (cRoot !== cOld) component[Math.max(cRoot, cOld)] = Math.min(cRoot, cOld);
      const peak = order[root];
      const px = peak % width;
      const py = (peak - px) / width;
      const prominence = data[peak] - data[p];
      const d2 = (px - ox) * (px - ox) + (py - oy) * (py - oy);
      if (prominence < minProminenceNm || d2 < minSep2) parent[root] = oldest;
    }
    parent[r] = find(parent, bestRoot);
    component[r] = find(component, oldest);
  }
  return { parent, component };
}

/** Root of i in a union–find forest, halving the path on the way. */
function find(arr: Int32Array, i: number): number {
  while (arr[i] !== i) {
    arr[i] = arr[arr[i]];
    i = arr[i];
  }
  return i;
}
