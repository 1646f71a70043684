import type { MeasureVesicleResult } from '../heightmap/types';
import type { Point } from '../types';
import type { BeadReason } from './types';

/** Options of {@link classifyBeads}. */
export interface ClassifyBeadsOptions {
  /** Label map of the detection (AFM px) and its width, to find the object under a pick. */
  labels: Int32Array;
  width: number;
  /** AFM pixel size (nm/px). */
  afmPixelNm: number;
  /** AFM positions of fiducial picks (AFM px); the object under each is a bead. @default [] */
  picksAfmPx?: readonly Point[];
  /** A pick on background takes the nearest object centre within this distance (nm). @default 300 */
  pickRadiusNm?: number;
  /** Tukey fence multiplier: taller than Q3 + k·IQR of the field's heights is not a vesicle. @default 3 (Tukey's "far out") */
  fenceIqr?: number;
  /** Nothing at or below this height is a bead by height alone (nm); the smallest multicolour beads are ~100 nm. @default 50 */
  minBeadHeightNm?: number;
  /** Fewer objects than this: no height fence (quartiles of a handful say nothing). @default 8 */
  minObjectsForFence?: number;
}

/** One object classified as a bead. */
export interface ClassifiedBead {
  readonly object: MeasureVesicleResult;
  readonly reasons: readonly BeadReason[];
  /** Index of the pick on it, else null. */
  readonly pickIndex: number | null;
}

/** Result of {@link classifyBeads}. */
export interface ClassifyBeadsResult {
  /** The objects that remain vesicles, in input order. */
  readonly vesicles: readonly MeasureVesicleResult[];
  readonly beads: readonly ClassifiedBead[];
  /** Height above which an object is a bead (nm), max(Q3 + k·IQR, minBeadHeightNm); null with too few objects. */
  readonly heightFenceNm: number | null;
  /** Tukey's inner fence Q3 + 1.5·IQR (nm): candidates for the multicolour test must be taller; null with too few objects. */
  readonly innerFenceNm: number | null;
  /** Upper quartile of the heights (nm); null with too few objects. */
  readonly upperQuartileNm: number | null;
  /** Picks that found no object (their index). */
  readonly unmatchedPicks: readonly number[];
}

/**
 * Separate beads from vesicles on what the AFM shows: an object taller than the field's vesicle heights allow
 * (Tukey's far-out fence Q3 + 3·IQR of all object heights, never below 50 nm, so that 100–200 nm beads are caught
 * in fields of 5–80 nm EVs) or lying under a fiducial pick is a bead. The detection's tall candidates (its fixed
 * upper cut-off) are beads too. The multicolour test, which needs the registration, comes later.
 *
 * @param objects - measured objects below the detection's fixed bead cut-off
 * @param tallObjects - the detection's tall candidates (always beads)
 * @param options - see {@link ClassifyBeadsOptions}
 * @returns the vesicles that remain, the beads with their reasons, the fences used
 * @throws RangeError for a non-positive pixel size or fence multiplier
 * @see Tukey JW 1977, Exploratory Data Analysis (fences at 1.5 and 3 IQR; common practice); docs/references.md §9 (bead sizes, EV heights)
 */
export function classifyBeads(
  objects: readonly MeasureVesicleResult[],
  tallObjects: readonly MeasureVesicleResult[],
  options: ClassifyBeadsOptions,
): ClassifyBeadsResult {
  const { labels, width, afmPixelNm, picksAfmPx = [], pickRadiusNm = 300, fenceIqr = 3, minBeadHeightNm = 50, minObjectsForFence = 8 } = options;
  if (!(afmPixelNm > 0)) throw new RangeError(`afmPixelNm must be > 0, got ${afmPixelNm}`);
  if (!(fenceIqr > 0)) throw new RangeError(`fenceIqr must be > 0, got ${fenceIqr}`);
  const heights = [...objects, ...tallObjects].map((o) => o.apexHeightNm).sort((a, b) => a - b);
  let heightFenceNm: number | null = null;
  let innerFenceNm: number | null = null;
  let upperQuartileNm: number | null = null;
  if (heights.length >= minObjectsForFence) {
    const q1 = quantile(heights, 0.25);
    const q3 = quantile(heights, 0.75);
    heightFenceNm = Math.max(q3 + fenceIqr * (q3 - q1), minBeadHeightNm);
    innerFenceNm = q3 + 1.5 * (q3 - q1);
    upperQuartileNm = q3;
  }
  const reasons = new Map<MeasureVesicleResult, BeadReason[]>();
  const pickOf = new Map<MeasureVesicleResult, number>();
  const add = (o: MeasureVesicleResult, r: BeadReason) => {
    const list = reasons.get(o) ?? [];
    if (!list.includes(r)) list.push(r);
    reasons.set(o, list);
  };
  for (const o of tallObjects) add(o, 'height');
  if (heightFenceNm !== null) for (const o of objects) if (o.apexHeightNm > heightFenceNm) add(o, 'height');

  const all = [...objects, ...tallObjects];
  const byLabel = new Map(all.map((o) => [o.label, o]));
  const height = labels.length / width;
  const unmatchedPicks: number[] = [];
  picksAfmPx.forEach((p, k) => {
    const x = Math.round(p.x);
    const y = Math.round(p.y);
    let hit = x >= 0 && y >= 0 && x < width && y < height ? byLabel.get(labels[y * width + x]) : undefined;
    if (!hit) {
      let best = pickRadiusNm / afmPixelNm;
      for (const o of all) {
        const d = Math.hypot(o.centroidPx.x - p.x, o.centroidPx.y - p.y);
        if (d <= best) {
          best = d;
          hit = o;
        }
      }
    }
    if (!hit) {
      unmatchedPicks.push(k);
      return;
    }
    add(hit, 'fiducial_pick');
    if (!pickOf.has(hit)) pickOf.set(hit, k);
  });
  return {
    vesicles: objects.filter((o) => !reasons.has(o)),
    beads: all.filter((o) => reasons.has(o)).map((o) => ({ object: o, reasons: reasons.get(o)!, pickIndex: pickOf.get(o) ?? null })),
    heightFenceNm,
    innerFenceNm,
    upperQuartileNm,
    unmatchedPicks,
  };
}

/** Linear-interpolation quantile of sorted values (type 7, the R and numpy default). */
function quantile(sorted: readonly number[], p: number): number {
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(sorted.length - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}
