import type { Raster } from '../types';
import { floodBasins, levelScale } from './floodBasins';
import { runsAbove } from './foregroundRuns';
import { linkRuns } from './linkRuns';
import { AREA, EDGE, emptyRegions, FIRST, PEAK, REGION_FIELDS, X_MAX, X_MIN, Y_MAX, Y_MIN } from './regionFields';
import type { DetectedRegion, DetectVesiclesOptions, DetectVesiclesResult } from './types';
import { validateRaster } from './validateRaster';

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
 * The foreground is first split into 8-connected components by run-based labelling (see
 * {@link labelComponents}), with each component's area, box, highest and lowest pixel. A component whose height
 * span is below `minProminenceNm`, or whose box is too small for two peaks `minSeparationPx` apart, cannot split
 * and is one region; only the other components are flooded. The regions, labels and diagnostics are those of
 * flooding the whole foreground.
 *
 * @param levelled - levelled heights (nm), background near 0
 * @param options - threshold (nm) and filters; see {@link DetectVesiclesOptions}
 * @returns label map, vesicles and fiducial candidates ordered by peak position (row, then column), diagnostics
 * @throws RangeError for a malformed raster or a non-finite threshold
 * @see He L, Chao Y, Suzuki K 2008, IEEE Trans Image Process 17(5):749–756 (run-based labelling; from memory)
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
  const labels = new Int32Array(width * height);
  // every helper below takes arrays and numbers only: a short-lived object reaching optimised code costs a
  // deoptimisation after each full collection (see surfaceRow's SurfaceFrame)
  const { nbRuns, start, end, row, rowFirst, nbPixels } = runsAbove(data, width, height, thresholdNm);
  if (nbPixels === 0) {
    const diagnostics = { thresholdNm, nbForegroundPx: 0, nbRegions: 0, nbSplits: 0, nbDroppedEdge: 0, nbDroppedSmall: 0, nbDroppedLow: 0 };
    return { labels, width, height, vesicles: [], fiducialCandidates: [], diagnostics };
  }
  const runLabel = new Int32Array(nbRuns);
  const nbComponents = linkRuns(start, end, rowFirst, height, 8, runLabel);
  const components = emptyRegions(nbComponents + 1, width, height); // index = component label
  const heightSpan = new Float64Array(2 * (nbComponents + 1)); // max, min (nm)
  componentStats(data, width, height, start, end, row, runLabel, components, heightSpan);
  const hMax = highest(heightSpan);
  const scale = levelScale(hMax, thresholdNm);
  const { first: runsFirst, list: runsList } = runsByComponent(runLabel, nbComponents);

  // a component splits only if two of its pixels differ by the prominence and two lie the separation apart; the
  // others are one region each, and only the rest is flooded
  const flooded = new Uint8Array(nbComponents + 1);
  const nbFlooded = markSplittable(components, heightSpan, minProminenceNm, minSeparationPx, flooded);
  const list = floodList(width, start, end, row, runsFirst, runsList, components, flooded, nbFlooded);
  const basins = floodBasins(data, width, height, list.first, list.pixels, list.x, list.y, list.boxes, hMax, scale, minProminenceNm, minSeparationPx);

  // regions: the basins, then the single-region components, each in raster order of its first flooded pixel
  const nbRegions = basins.nbBasins + nbComponents - nbFlooded;
  const regions = new Int32Array(nbRegions * REGION_FIELDS);
  regions.set(basins.regions);
  const componentOfRegion = new Int32Array(nbRegions).fill(-1);
  appendSingleRegions(data, width, start, end, row, runsFirst, runsList, components, heightSpan, flooded, hMax, scale, basins.nbBasins, regions, componentOfRegion);
  const regionOrder = Int32Array.from({ length: nbRegions }, (_, i) => i);
  regionOrder.sort((a, b) => regions[a * REGION_FIELDS + FIRST] - regions[b * REGION_FIELDS + FIRST]);

  const splitBasin = basinsSplit(list.first, basins.basinOfRank, basins.nbBasins);
  const labelOfRegion = new Int32Array(nbRegions);
  const vesicles: DetectedRegion[] = [];
  const fiducialCandidates: DetectedRegion[] = [];
  const dropped = filterRegions(data, width, regions, regionOrder, minAreaPx, minHeightNm, dropEdgeRegions, labelOfRegion);
  for (let k = 0; k < nbRegions; k++) {
    const i = regionOrder[k];
    if (labelOfRegion[i] === 0) continue;
    const region = describeRegion(data, width, regions, i, labelOfRegion[i], i < basins.nbBasins && splitBasin[i] === 1);
    (region.maxHeightNm > beadMinHeightNm ? fiducialCandidates : vesicles).push(region);
  }
  writeLabels(labels, width, start, end, row, runsFirst, runsList, basins.order, basins.basinOfRank, componentOfRegion, labelOfRegion, basins.nbBasins);

  return {
    labels, width, height, vesicles, fiducialCandidates,
    diagnostics: {
      thresholdNm, nbForegroundPx: nbPixels, nbRegions, nbSplits: nbRegions - nbComponents,
      nbDroppedEdge: dropped[0], nbDroppedSmall: dropped[1], nbDroppedLow: dropped[2],
    },
  };
}

/**
 * Area, box, border contact and peak (highest pixel, first in raster order) of every component into `components`
 * (see regionFields), and its highest and lowest height into heightSpan[2c], heightSpan[2c + 1]; one pass over
 * the runs.
 */
function componentStats(
  data: Float32Array, width: number, height: number, start: Int32Array, end: Int32Array, row: Int32Array,
  runLabel: Int32Array, components: Int32Array, heightSpan: Float64Array,
): void {
  for (let c = 0; 2 * c < heightSpan.length; c++) {
    heightSpan[2 * c] = -Infinity;
    heightSpan[2 * c + 1] = Infinity;
  }
  for (let k = 0; k < runLabel.length; k++) {
    const c = runLabel[k];
    const at = c * REGION_FIELDS;
    const s = start[k];
    const e = end[k];
    const y = row[k];
    components[at + AREA] += e - s;
    if (s < components[at + X_MIN]) components[at + X_MIN] = s;
    if (e - 1 > components[at + X_MAX]) components[at + X_MAX] = e - 1;
    if (y < components[at + Y_MIN]) components[at + Y_MIN] = y;
    components[at + Y_MAX] = y; // runs come in raster order
    if (s === 0 || e === width || y === 0 || y === height - 1) components[at + EDGE] = 1;
    const rowAt = y * width;
    for (let x = s; x < e; x++) {
      const h = data[rowAt + x];
      if (h > heightSpan[2 * c]) {
        heightSpan[2 * c] = h;
        components[at + PEAK] = rowAt + x;
      }
      if (h < heightSpan[2 * c + 1]) heightSpan[2 * c + 1] = h;
    }
  }
}

/** Highest of the maxima in heightSpan (every other entry). */
function highest(heightSpan: Float64Array): number {
  let hMax = -Infinity;
  for (let i = 2; i < heightSpan.length; i += 2) hMax = Math.max(hMax, heightSpan[i]);
  return hMax;
}

/**
 * flooded[c] = 1 for the components that can split: a height span of at least the prominence and a box with room
 * for two peaks the separation apart. Written as negations so that a NaN option floods, as the flood's own
 * comparisons would. Returns their number.
 */
function markSplittable(components: Int32Array, heightSpan: Float64Array, minProminenceNm: number, minSeparationPx: number, flooded: Uint8Array): number {
  const minSep2 = minSeparationPx * minSeparationPx;
  let count = 0;
  for (let c = 1; c < flooded.length; c++) {
    const at = c * REGION_FIELDS;
    const w = components[at + X_MAX] - components[at + X_MIN];
    const h = components[at + Y_MAX] - components[at + Y_MIN];
    const splits = !(heightSpan[2 * c] - heightSpan[2 * c + 1] < minProminenceNm) && !(w * w + h * h < minSep2);
    flooded[c] = +splits;
    count += +splits;
  }
  return count;
}

/** The runs of each component, in raster order: list[first[c] … first[c + 1]) (a counting sort). */
function runsByComponent(runLabel: Int32Array, nbComponents: number): { first: Int32Array; list: Int32Array } {
  const first = new Int32Array(nbComponents + 2);
  for (let k = 0; k < runLabel.length; k++) first[runLabel[k] + 1]++;
  for (let c = 0; c <= nbComponents; c++) first[c + 1] += first[c];
  const next = first.slice();
  const list = new Int32Array(runLabel.length);
  for (let k = 0; k < runLabel.length; k++) list[next[runLabel[k]]++] = k;
  return { first, list };
}

/** The pixels of the components to flood, component after component, each in raster order, with their boxes. */
function floodList(
  width: number, start: Int32Array, end: Int32Array, row: Int32Array, runsFirst: Int32Array, runsList: Int32Array,
  components: Int32Array, flooded: Uint8Array, nbFlooded: number,
): { first: Int32Array; pixels: Int32Array; x: Int32Array; y: Int32Array; boxes: Int32Array } {
  let nbPixels = 0;
  for (let c = 1; c < flooded.length; c++) if (flooded[c]) nbPixels += components[c * REGION_FIELDS + AREA];
  const first = new Int32Array(nbFlooded + 1);
  const pixels = new Int32Array(nbPixels);
  const x = new Int32Array(nbPixels);
  const y = new Int32Array(nbPixels);
  const boxes = new Int32Array(4 * nbFlooded);
  gatherFlooded(width, start, end, row, runsFirst, runsList, components, flooded, first, pixels, x, y, boxes);
  return { first, pixels, x, y, boxes };
}

/** The loop of {@link floodList}, on arrays only. */
function gatherFlooded(
  width: number, start: Int32Array, end: Int32Array, row: Int32Array, runsFirst: Int32Array, runsList: Int32Array,
  components: Int32Array, flooded: Uint8Array, first: Int32Array, pixels: Int32Array, x: Int32Array, y: Int32Array, boxes: Int32Array,
): void {
  let j = 0;
  let n = 0;
  for (let c = 1; c < flooded.length; c++) {
    if (!flooded[c]) continue;
    first[j] = n;
    const at = c * REGION_FIELDS;
    boxes[4 * j] = components[at + X_MIN];
    boxes[4 * j + 1] = components[at + Y_MIN];
    boxes[4 * j + 2] = components[at + X_MAX];
    boxes[4 * j + 3] = components[at + Y_MAX];
    for (let i = runsFirst[c]; i < runsFirst[c + 1]; i++) {
      const k = runsList[i];
      const r = row[k];
      for (let col = start[k]; col < end[k]; col++) {
        pixels[n] = r * width + col;
        x[n] = col;
        y[n++] = r;
      }
    }
    j++;
  }
  first[j] = n;
}

/**
 * Append each single-region component to `regions` (after the basins, in component order) with its first pixel
 * in flooding order: the first, in raster order, of its pixels on the level of its maximum. componentOfRegion
 * records which component each appended region is.
 */
function appendSingleRegions(
  data: Float32Array, width: number, start: Int32Array, end: Int32Array, row: Int32Array,
  runsFirst: Int32Array, runsList: Int32Array, components: Int32Array, heightSpan: Float64Array, flooded: Uint8Array,
  hMax: number, scale: number, nbBasins: number, regions: Int32Array, componentOfRegion: Int32Array,
): void {
  let r = nbBasins;
  for (let c = 1; c < flooded.length; c++) {
    if (flooded[c]) continue;
    regions.set(components.subarray(c * REGION_FIELDS, (c + 1) * REGION_FIELDS), r * REGION_FIELDS);
    regions[r * REGION_FIELDS + FIRST] = firstOnLevel(data, width, start, end, row, runsList, runsFirst[c], runsFirst[c + 1], Math.floor((hMax - heightSpan[2 * c]) * scale), hMax, scale);
    componentOfRegion[r++] = c;
  }
}

/** Raster index of the first pixel on `level` among the runs list[from … to). */
function firstOnLevel(
  data: Float32Array, width: number, start: Int32Array, end: Int32Array, row: Int32Array, list: Int32Array,
  from: number, to: number, level: number, hMax: number, scale: number,
): number {
  for (let i = from; i < to; i++) {
    const k = list[i];
    const at = row[k] * width;
    for (let x = start[k]; x < end[k]; x++) if (Math.floor((hMax - data[at + x]) * scale) === level) return at + x;
  }
  return -1; // unreachable: the maximum is one of the component's pixels
}

/**
 * Apply the filters to the regions in `order` (border, then area, then height) and number the kept ones from 1
 * into labelOfRegion; returns the counts dropped for the border, for the area and for the height.
 */
function filterRegions(
  data: Float32Array, width: number, regions: Int32Array, order: Int32Array, minAreaPx: number, minHeightNm: number,
  dropEdgeRegions: boolean, labelOfRegion: Int32Array,
): [number, number, number] {
  let nbDroppedEdge = 0;
  let nbDroppedSmall = 0;
  let nbDroppedLow = 0;
  let nextLabel = 1;
  for (let k = 0; k < order.length; k++) {
    const i = order[k];
    const at = i * REGION_FIELDS;
    if (dropEdgeRegions && regions[at + EDGE]) nbDroppedEdge++;
    else if (regions[at + AREA] < minAreaPx) nbDroppedSmall++;
    else if (data[regions[at + PEAK]] < minHeightNm) nbDroppedLow++;
    else labelOfRegion[i] = nextLabel++;
  }
  return [nbDroppedEdge, nbDroppedSmall, nbDroppedLow];
}

/**
 * split[b] = 1 for every basin whose component holds more than one basin (before any filter: a dropped neighbour
 * still cut the footprint). Ranks come component after component (first[j] … first[j + 1]).
 */
function basinsSplit(first: Int32Array, basinOfRank: Int32Array, nbBasins: number): Uint8Array {
  const split = new Uint8Array(nbBasins);
  for (let j = 0; j + 1 < first.length; j++) {
    let lo = nbBasins;
    let hi = -1;
    for (let r = first[j]; r < first[j + 1]; r++) {
      const b = basinOfRank[r];
      if (b < lo) lo = b;
      if (b > hi) hi = b;
    }
    // basins are numbered by their root's rank, so one component's basins are lo … hi
    if (hi > lo) split.fill(1, lo, hi + 1);
  }
  return split;
}

/** The {@link DetectedRegion} of region i. */
function describeRegion(data: Float32Array, width: number, regions: Int32Array, i: number, label: number, split: boolean): DetectedRegion {
  const at = i * REGION_FIELDS;
  const peak = regions[at + PEAK];
  return {
    label, areaPx: regions[at + AREA], maxHeightNm: data[peak], split,
    peakPx: { x: peak % width, y: Math.floor(peak / width) },
    xMin: regions[at + X_MIN], yMin: regions[at + Y_MIN], xMax: regions[at + X_MAX], yMax: regions[at + Y_MAX],
  };
}

/** labels = the label of each kept region on its pixels (flooded pixels through their basin, others by runs). */
function writeLabels(
  labels: Int32Array, width: number, start: Int32Array, end: Int32Array, row: Int32Array, runsFirst: Int32Array, runsList: Int32Array,
  order: Int32Array, basinOfRank: Int32Array, componentOfRegion: Int32Array, labelOfRegion: Int32Array, nbBasins: number,
): void {
  for (let r = 0; r < order.length; r++) labels[order[r]] = labelOfRegion[basinOfRank[r]];
  for (let i = nbBasins; i < labelOfRegion.length; i++) {
    const label = labelOfRegion[i];
    if (label === 0) continue;
    const c = componentOfRegion[i];
    for (let j = runsFirst[c]; j < runsFirst[c + 1]; j++) {
      const k = runsList[j];
      labels.fill(label, row[k] * width + start[k], row[k] * width + end[k]);
    }
  }
}
