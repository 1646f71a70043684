import KDBush from 'kdbush';
import { mulberry32 } from '../geometry/mulberry32';
import type { Point, Raster } from '../types';
import { callMarkerAmplitudes } from './callMarkerAmplitudes';
import { estimateMarkerAmplitudes } from './estimateMarkerAmplitudes';
import type { CameraModel, MarkerCallRule } from './types';

/** Options of {@link chanceColocalisation}. */
export interface ChanceColocalisationOptions {
  /** PSF standard deviation (px). Required. */
  sigmaPx: number;
  /** Camera model, as for the vesicles. Required. */
  camera: CameraModel;
  /** The marker's rule, as for the vesicles. Required. */
  rule: MarkerCallRule;
  /** Shift lengths are drawn uniformly between these (px), e.g. 2–4 µm over the pixel size. Required. */
  minShiftPx: number;
  maxShiftPx: number;
  /** Number of shifted copies of the vesicle set. @default 5 */
  nbShifts?: number;
  /** Seed of the shift directions and lengths. @default 1 */
  seed?: number;
  /** Beads and other fixed sources (px), fitted with their own columns. @default none */
  fixedSourcesPx?: readonly Point[];
  /** As in linkVesicles: spots closer than this to a shifted position count as its light (px). @default 1.5·sigmaPx */
  ownColumnMinDistancePx?: number;
}

/** Result of {@link chanceColocalisation}. */
export interface ChanceColocalisationResult {
  /** Share of shifted positions called positive (0–1): the positive fraction expected by chance alone. */
  readonly chancePositiveFraction: number;
  readonly nbPositions: number;
  readonly nbPositive: number;
  /** The shifts used (px). */
  readonly shiftsPx: Point[];
}

/**
 * Chance colocalisation of one marker: the vesicle set is moved as a whole by a few microns (several seeded shifts,
 * wrapped around the frame so density and count stay the same), and each moved position is fitted and called exactly
 * like a vesicle (joint fit with the beads and with the spots away from it, same camera model and rule). The share
 * called positive is the positive fraction that random placement alone would give, from free dye, debris and other
 * vesicles' light; compare it with the vesicles' positive fraction. Moving the whole set keeps the vesicles' spacing,
 * as in the shifted-image controls of object-based colocalisation.
 *
 * @param raster - fluorescence frame (raw counts); not modified
 * @param vesiclesFl - positions of the vesicles in this frame (px); not modified
 * @param spotsPx - detected spots of this channel, dim ones included (px); not modified
 * @param options - see {@link ChanceColocalisationOptions}
 * @returns the chance positive fraction and its counts
 * @throws RangeError for shift lengths that are not 0 < min ≤ max
 * @see Lachmanovich E et al. J Microsc 212:122–131, 2003 (object-based colocalisation against randomised positions; from memory).
 */
export function chanceColocalisation(
  raster: Raster,
  vesiclesFl: readonly Point[],
  spotsPx: readonly Point[],
  options: ChanceColocalisationOptions,
): ChanceColocalisationResult {
  const { sigmaPx, camera, rule, minShiftPx, maxShiftPx, nbShifts = 5, seed = 1, fixedSourcesPx = [], ownColumnMinDistancePx = 1.5 * sigmaPx } = options;
  if (!(minShiftPx > 0 && maxShiftPx >= minShiftPx)) throw new RangeError(`shift lengths must satisfy 0 < min ≤ max, got ${minShiftPx}, ${maxShiftPx}`);
  const { width, height } = raster;
  const inFrame = vesiclesFl.filter((p) => p.x >= 0 && p.x <= width - 1 && p.y >= 0 && p.y <= height - 1);
  const random = mulberry32(seed);
  const wrap = (v: number, size: number) => ((v % size) + size) % size;
  const shiftsPx: Point[] = [];
  let nbPositions = 0;
  let nbPositive = 0;
  for (let s = 0; s < nbShifts && inFrame.length > 0; s++) {
    const angle = 2 * Math.PI * random();
    const length = minShiftPx + (maxShiftPx - minShiftPx) * random();
    const shift = { x: length * Math.cos(angle), y: length * Math.sin(angle) };
    shiftsPx.push(shift);
    const moved = inFrame.map((p) => ({ x: Math.min(width - 1, wrap(p.x + shift.x, width)), y: Math.min(height - 1, wrap(p.y + shift.y, height)) }));
    const index = new KDBush(moved.length);
    for (const p of moved) index.add(p.x, p.y);
    index.finish();
    // sources further than 6σ from every moved position fall in other neighbourhoods of the fit and change nothing here
    const near = (p: Point) => index.within(p.x, p.y, 6 * sigmaPx).length > 0;
    const sources = [...fixedSourcesPx, ...spotsPx.filter((sp) => index.within(sp.x, sp.y, ownColumnMinDistancePx).length === 0)].filter(near);
    const fitted = estimateMarkerAmplitudes(raster, [...moved, ...sources], { sigmaPx, camera, nbQueried: moved.length }).amplitudes.slice(0, moved.length);
    for (const call of callMarkerAmplitudes(fitted, rule)) {
      if (call.positive === null) continue;
      nbPositions++;
      if (call.positive) nbPositive++;
    }
  }
  return { chancePositiveFraction: nbPositions ? nbPositive / nbPositions : Number.NaN, nbPositions, nbPositive, shiftsPx };
}
