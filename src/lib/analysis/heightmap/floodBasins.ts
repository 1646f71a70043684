import { AREA, EDGE, emptyRegions, FIRST, PEAK, REGION_FIELDS, X_MAX, X_MIN, Y_MAX, Y_MIN } from './regionFields';

const NB_LEVELS = 1 << 16;
const NEIGHBOUR_DX = [-1, 0, 1, -1, 1, -1, 0, 1];
const NEIGHBOUR_DY = [-1, -1, -1, 0, 0, 1, 1, 1];

/** Watershed basins of whole components; see {@link floodBasins}. */
export interface Basins {
  readonly nbBasins: number;
  /** Pixels in flooding order, component after component (within one: height descending, ties in raster order). */
  readonly order: Int32Array;
  /** Basin of each flooded pixel, by rank in `order`. */
  readonly basinOfRank: Int32Array;
  /** Statistics of each basin, see regionFields. */
  readonly regions: Int32Array;
}

/**
 * Levels per nm of a foreground's height quantisation: heights between the threshold and the maximum in 65 536
 * steps (e.g. 0.006 nm for a 400 nm bead, far below AFM noise), so that pixels are ordered in linear time. A
 * pixel's level is ⌊(hMax − h)·scale⌋, 0 for the highest; every ordering of one map uses the same levels, so an
 * ordering restricted to some components agrees with the ordering of the whole foreground.
 *
 * @param hMax - highest foreground height (nm)
 * @param thresholdNm - foreground threshold (nm)
 */
export function levelScale(hMax: number, thresholdNm: number): number {
  return (NB_LEVELS - 1) / (hMax - thresholdNm || 1);
}

/**
 * Watershed of whole connected components by a priority flood (8-connectivity): pixels are flooded from the
 * highest down and a union–find keeps the basins; when a pixel joins two basins, the lower peak keeps its own
 * basin only if it rises at least `minProminenceNm` above this saddle and lies `minSeparationPx` or more from the
 * higher peak, otherwise the basins merge. Components never touch, so each is flooded on its own, in the order a
 * flood of the whole foreground would visit its pixels, and gets the same basins. Its pixels' flood ids live in a
 * map of its bounding box with a one-pixel margin, which stays in cache and needs no bounds checks; a map of the
 * whole frame, read in height order, made every pixel's neighbour reads miss the cache.
 *
 * @param data - heights (nm), row-major
 * @param first - component j's pixels are pixels[first[j] … first[j + 1]), in raster order
 * @param pixels - raster index of each pixel
 * @param px - column of each pixel
 * @param py - row of each pixel
 * @param boxes - bounding box of each component: [xMin, yMin, xMax, yMax] at 4j
 * @param hMax - highest foreground height (nm)
 * @param scale - see {@link levelScale}
 * @returns the basins and the flooding order
 * @see Beucher S, Lantuéjoul C 1979, Int Workshop on Image Processing, Rennes (watershed)
 * @see Edelsbrunner H, Letscher D, Zomorodian A 2002, Discrete Comput Geom 28:511–533 (persistence: the younger peak merges at the saddle)
 */
export function floodBasins(
  data: Float32Array, width: number, height: number, first: Int32Array, pixels: Int32Array, px: Int32Array, py: Int32Array,
  boxes: Int32Array, hMax: number, scale: number, minProminenceNm: number, minSeparationPx: number,
): Basins {
  const nbComponents = first.length - 1;
  const m = pixels.length;
  const rankOf = orderByHeight(data, pixels, first, hMax, scale); // position in `pixels` of each rank
  const order = new Int32Array(m);
  const x = new Int32Array(m); // column and row of each rank
  const y = new Int32Array(m);
  for (let r = 0; r < m; r++) {
    const k = rankOf[r];
    order[r] = pixels[k];
    x[r] = px[k];
    y[r] = py[k];
  }
  const parent = new Int32Array(m);
  let boxMax = 0;
  for (let j = 0; j < nbComponents; j++) boxMax = Math.max(boxMax, (boxes[4 * j + 2] - boxes[4 * j] + 3) * (boxes[4 * j + 3] - boxes[4 * j + 1] + 3));
  const idOf = new Int32Array(boxMax);
  for (let j = 0; j < nbComponents; j++) {
    const x0 = boxes[4 * j] - 1; // the box with a margin of one pixel on each side
    const y0 = boxes[4 * j + 1] - 1;
    const w = boxes[4 * j + 2] - x0 + 2;
    idOf.fill(0, 0, w * (boxes[4 * j + 3] - y0 + 2));
    floodComponent(data, width, order, x, y, first[j], first[j + 1], x0, y0, w, idOf, parent, minProminenceNm, minSeparationPx);
  }
  const basinOfRank = new Int32Array(m);
  const nbBasins = numberBasins(parent, basinOfRank);
  const regions = emptyRegions(nbBasins, width, height);
  basinStats(data, width, height, order, x, y, basinOfRank, regions);
  return { nbBasins, order, basinOfRank, regions };
}

/** basinOfRank = basin of each rank, basins numbered by their root's rank; returns the number of basins. */
function numberBasins(parent: Int32Array, basinOfRank: Int32Array): number {
  let nbBasins = 0;
  for (let r = 0; r < parent.length; r++) {
    // ranks before r are numbered already, and a root is the smallest rank of its set
    const root = find(parent, r);
    basinOfRank[r] = root === r ? nbBasins++ : basinOfRank[root];
  }
  return nbBasins;
}

/** Area, box, border contact, peak and first pixel of every basin, in rank order. */
function basinStats(
  data: Float32Array, width: number, height: number, order: Int32Array, x: Int32Array, y: Int32Array,
  basinOfRank: Int32Array, regions: Int32Array,
): void {
  for (let r = 0; r < order.length; r++) {
    const at = basinOfRank[r] * REGION_FIELDS;
    const p = order[r];
    const xr = x[r];
    const yr = y[r];
    // the first flooded pixel is the highest only up to the quantisation
    if (regions[at + AREA] === 0) {
      regions[at + FIRST] = p;
      regions[at + PEAK] = p;
    } else if (data[p] > data[regions[at + PEAK]]) regions[at + PEAK] = p;
    regions[at + AREA]++;
    if (xr < regions[at + X_MIN]) regions[at + X_MIN] = xr;
    if (xr > regions[at + X_MAX]) regions[at + X_MAX] = xr;
    if (yr < regions[at + Y_MIN]) regions[at + Y_MIN] = yr;
    if (yr > regions[at + Y_MAX]) regions[at + Y_MAX] = yr;
    if (xr === 0 || yr === 0 || xr === width - 1 || yr === height - 1) regions[at + EDGE] = 1;
  }
}

/**
 * Positions in `pixels`, each component's range ordered by height, descending, ties in raster order: a stable
 * radix sort on the 16-bit levels (low byte, then high byte), then a stable split by component.
 */
function orderByHeight(data: Float32Array, pixels: Int32Array, first: Int32Array, hMax: number, scale: number): Int32Array {
  const m = pixels.length;
  const nbComponents = first.length - 1;
  const level = new Int32Array(m);
  for (let k = 0; k < m; k++) level[k] = Math.floor((hMax - data[pixels[k]]) * scale);
  const byLow = new Int32Array(m);
  const starts = new Int32Array(257);
  for (let k = 0; k < m; k++) starts[(level[k] & 255) + 1]++;
  for (let b = 0; b < 256; b++) starts[b + 1] += starts[b];
  for (let k = 0; k < m; k++) byLow[starts[level[k] & 255]++] = k;
  const byLevel = new Int32Array(m);
  starts.fill(0);
  for (let k = 0; k < m; k++) starts[(level[k] >> 8) + 1]++;
  for (let b = 0; b < 256; b++) starts[b + 1] += starts[b];
  for (let i = 0; i < m; i++) {
    const k = byLow[i];
    byLevel[starts[level[k] >> 8]++] = k;
  }
  const componentOf = new Int32Array(m);
  for (let j = 0; j < nbComponents; j++) componentOf.fill(j, first[j], first[j + 1]);
  const next = first.slice(0, nbComponents);
  const rankOf = new Int32Array(m);
  for (let i = 0; i < m; i++) {
    const k = byLevel[i];
    rankOf[next[componentOf[k]]++] = k;
  }
  return rankOf;
}

/**
 * Priority flood of one component, ranks from..to−1 of `order`: sets the union–find parents of its basins,
 * merged by the prominence and separation rules. A basin's id is the rank of its peak, so the root of a set is its
 * first flooded pixel. idOf maps the component's box with its margin (origin x0, y0; w columns; zero-filled) to
 * rank + 1 of the flooded pixels; the margin is never flooded, so neighbours need no bounds checks.
 */
function floodComponent(
  data: Float32Array, width: number, order: Int32Array, px: Int32Array, py: Int32Array, from: number, to: number,
  x0: number, y0: number, w: number, idOf: Int32Array, parent: Int32Array, minProminenceNm: number, minSeparationPx: number,
): void {
  const roots = new Int32Array(8);
  const minSep2 = minSeparationPx * minSeparationPx;
  for (let r = from; r < to; r++) {
    const p = order[r];
    const at = (py[r] - y0) * w + (px[r] - x0);
    idOf[at] = r + 1;
    let nbRoots = 0;
    let bestHeight = -Infinity;
    let bestRoot = -1;
    for (let k = 0; k < 8; k++) {
      const dx = NEIGHBOUR_DX[k];
      const dy = NEIGHBOUR_DY[k];
      const id = idOf[at + dy * w + dx] - 1;
      if (id < 0) continue;
      const root = find(parent, id);
      const hq = data[p + dy * width + dx];
      if (hq > bestHeight) {
        bestHeight = hq;
        bestRoot = root;
      }
      let seen = false;
      for (let s = 0; s < nbRoots; s++) if (roots[s] === root) seen = true;
      if (!seen) roots[nbRoots++] = root;
    }
    if (nbRoots === 0) {
      parent[r] = r;
      continue;
    }
    let oldest = roots[0];
    for (let s = 1; s < nbRoots; s++) if (roots[s] < oldest) oldest = roots[s];
    const ox = px[oldest];
    const oy = py[oldest];
    for (let s = 0; s < nbRoots; s++) {
      const root = roots[s];
      if (root === oldest) continue;
      const prominence = data[order[root]] - data[p];
      const d2 = (px[root] - ox) * (px[root] - ox) + (py[root] - oy) * (py[root] - oy);
      if (prominence < minProminenceNm || d2 < minSep2) parent[root] = oldest;
    }
    parent[r] = find(parent, bestRoot);
  }
}

/** Root of i in a union–find forest, halving the path on the way. */
function find(arr: Int32Array, i: number): number {
  while (arr[i] !== i) {
    arr[i] = arr[arr[i]];
    i = arr[i];
  }
  return i;
}
