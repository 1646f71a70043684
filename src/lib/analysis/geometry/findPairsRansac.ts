import KDBush from 'kdbush';
import { AnalysisError } from '../errors';
import type { Affine, Point } from '../types';
import { applyAffine } from './applyAffine';
import { buildPointIndex } from './buildPointIndex';
import { fitModel } from './fitModel';
import { fitSimilarity } from './fitSimilarity';
import { mulberry32 } from './mulberry32';
import { nearestInIndex } from './nearestInIndex';
import { nearestNeighbours } from './nearestNeighbours';
import type { RegistrationModel } from './types';

/** Options of {@link findPairsRansac}. */
export interface FindPairsRansacOptions {
  /** AFM pixel size (nm per pixel); with flPixelNm it fixes the expected scale. */
  readonly afmPixelNm: number;
  /** Fluorescence pixel size (nm per pixel). */
  readonly flPixelNm: number;
  /**
   * Accepted relative deviation of each axis scale from afmPixelNm / flPixelNm.
   * @default 0.2
   */
  readonly scaleTolerance?: number;
  /**
   * A mapped AFM candidate within this distance (fluorescence pixels) of a fluorescence candidate is an inlier.
   * @default 2
   */
  readonly inlierTolerancePx?: number;
  /**
   * Triangles are built from each point and pairs of its k nearest neighbours.
   * @default 5
   */
  readonly nbNeighbours?: number;
  /**
   * Largest allowed difference of the side-length ratios (shortest/longest, middle/longest) of two triangles.
   * @default 0.05
   */
  readonly sideRatioTolerance?: number;
  /**
   * Most triangle-pair hypotheses scored; all are scored when there are fewer.
   * @default 3000
   */
  readonly maxIterations?: number;
  /**
   * Most rounds of nearest-neighbour re-matching and refitting.
   * @default 20
   */
  readonly maxRefineIterations?: number;
  /**
   * Accept mirrored maps (det < 0), e.g. an inverted microscope.
   * @default true
   */
  readonly allowMirror?: boolean;
  /**
   * Fewest inliers for a transform to be accepted. The 3 points that define a hypothesis always
   * match, so this must exceed 3 to mean anything.
   * @default 5
   */
  readonly minInliers?: number;
  /**
   * Seed of the pseudo-random sampler.
   * @default 1
   */
  readonly seed?: number;
  /**
   * Transform fitted to each hypothesis and in the refinement: 'affine' (6 parameters) or the
   * constrained 'similarity' (rotation, uniform scale, shift, optional mirror).
   * @default 'affine'
   */
  readonly model?: RegistrationModel;
}

/** One proposed correspondence. */
export interface ProposedPair {
  readonly afmIndex: number;
  readonly flIndex: number;
  readonly afm: Point;
  readonly fl: Point;
  /** Distance after the final fit (fluorescence pixels). */
  readonly residualPx: number;
}

/** Result of {@link findPairsRansac}. */
export interface FindPairsRansacResult {
  readonly pairs: ProposedPair[];
  /** The model that was fitted. */
  readonly model: RegistrationModel;
  /** Final least-squares fit of `model` on the proposed pairs, as a 2×3 matrix (AFM px → fluorescence px). */
  readonly flFromAfm: Affine;
  readonly nbInliers: number;
  /** RMS residual of the proposed pairs (fluorescence pixels). */
  readonly rmsResidualPx: number;
  /** Same as nbInliers: number of pairs in the final fit. */
  readonly nbFiducials: number;
  /** Number of triangle-pair hypotheses that were available / scored. */
  readonly nbHypotheses: number;
  readonly nbIterations: number;
}

interface Triangle {
  /** Vertex indices ordered by the length of the opposite side, shortest first. */
  readonly v: readonly [number, number, number];
  readonly ratioShort: number;
  readonly ratioMid: number;
  readonly longestPx: number;
}

function buildTriangles(points: readonly Point[], k: number, minAreaRatio: number): Triangle[] {
  const n = points.length;
  if (n < 3) return [];
  const tree = buildPointIndex(points);
  const xs = points.map((p) => p.x);
  const ys = points.map((p) => p.y);
  const area = Math.max((Math.max(...xs) - Math.min(...xs)) * (Math.max(...ys) - Math.min(...ys)), 1);
  const startRadius = Math.sqrt((area * (k + 1)) / (Math.PI * n));
  const seen = new Set<string>();
  const out: Triangle[] = [];
  for (let i = 0; i < n; i++) {
    const nb = nearestNeighbours(tree, points, i, k, startRadius);
    for (let a = 0; a < nb.length; a++) {
      for (let b = a + 1; b < nb.length; b++) {
        const ids = [i, nb[a], nb[b]].sort((x, y) => x - y);
        const key = ids.join(',');
        if (seen.has(key)) continue;
        seen.add(key);
        const [p, q, r] = ids.map((id) => points[id]);
        // side opposite each vertex
        const opp = [Math.hypot(q.x - r.x, q.y - r.y), Math.hypot(p.x - r.x, p.y - r.y), Math.hypot(p.x - q.x, p.y - q.y)];
        const order = [0, 1, 2].sort((x, y) => opp[x] - opp[y]);
        const [s0, s1, s2] = order.map((o) => opp[o]);
        const twiceArea = Math.abs((q.x - p.x) * (r.y - p.y) - (q.y - p.y) * (r.x - p.x));
        // thin triangles give unstable 3-point fits; near-equal sides make the vertex order ambiguous
        if (twiceArea / (s2 * s2) < minAreaRatio || s1 - s0 < 0.02 * s2 || s2 - s1 < 0.02 * s2) continue;
        out.push({ v: [ids[order[0]], ids[order[1]], ids[order[2]]], ratioShort: s0 / s2, ratioMid: s1 / s2, longestPx: s2 });
      }
    }
  }
  return out;
}

/** Exact affine through three correspondences, or null if the AFM triangle is degenerate. */
function affineFromThree(p: readonly Point[], q: readonly Point[]): Affine | null {
  const det = (p[1].x - p[0].x) * (p[2].y - p[0].y) - (p[2].x - p[0].x) * (p[1].y - p[0].y);
  if (Math.abs(det) < 1e-12) return null;
  const ux = p[1].x - p[0].x, uy = p[1].y - p[0].y, vx = p[2].x - p[0].x, vy = p[2].y - p[0].y;
  const solve = (du: number, dv: number) => [(du * vy - dv * uy) / det, (dv * ux - du * vx) / det];
  const [a, b] = solve(q[1].x - q[0].x, q[2].x - q[0].x);
  const [d, e] = solve(q[1].y - q[0].y, q[2].y - q[0].y);
  return [a, b, q[0].x - a * p[0].x - b * p[0].y, d, e, q[0].y - d * p[0].x - e * p[0].y];
}

/**
 * Least-squares similarity through three correspondences, or null if it is degenerate or cannot
 * bring all three within the inlier tolerance (the two triangles differ by more than rotation and scale).
 */
function similarityFromThree(p: readonly Point[], q: readonly Point[], allowMirror: boolean, tolerancePx: number): Affine | null {
  try {
    const r = fitSimilarity(p, q, { allowReflection: allowMirror });
    return Math.max(...r.residualsPx) <= tolerancePx ? r.flFromAfmMatrix : null;
  } catch (error) {
    if (error instanceof AnalysisError) return null;
    throw error;
  }
}

/** Singular values of the 2×2 linear part. */
function singularValues(t: Affine): [number, number] {
  const [a, b, , d, e] = t;
  const s1 = Math.hypot(a + e, d - b) / 2;
  const s2 = Math.hypot(a - e, d + b) / 2;
  return [s1 + s2, Math.abs(s1 - s2)];
}

/**
 * Greedy one-to-one matching: each mapped AFM point takes its nearest fluorescence point within
 * the tolerance; when two claim the same one, the closer wins.
 */
function matchPoints(
  afm: readonly Point[],
  fl: readonly Point[],
  flTree: KDBush,
  flFromAfm: Affine,
  tolerancePx: number,
): Map<number, { afmIndex: number; distancePx: number }> {
  const byFl = new Map<number, { afmIndex: number; distancePx: number }>();
  afm.forEach((p, afmIndex) => {
    const hit = nearestInIndex(flTree, fl, applyAffine(flFromAfm, p), tolerancePx);
    if (hit === null) return;
    const prev = byFl.get(hit.index);
    if (prev === undefined || hit.distancePx < prev.distancePx) byFl.set(hit.index, { afmIndex, distancePx: hit.distancePx });
  });
  return byFl;
}

/**
 * Automatic pairing of detected AFM and fluorescence spots when no fiducials are placed yet.
 * Hypotheses pair a triangle of near neighbours in each image whose side-length ratios agree and whose
 * size ratio fits the recorded pixel sizes; each gives a transform from 3 correspondences (the exact
 * affine, or the least-squares similarity when `model` is 'similarity'), which is kept if its scales fit
 * the pixel-size ratio and scored by counting inliers. The best is refined by repeated nearest-neighbour
 * matching (kdbush) and least-squares refitting of the same model. Deterministic for a seed.
 *
 * @param afmCandidates - detected points in AFM pixels (may include spots with no partner)
 * @param flCandidates - detected points in fluorescence pixels (may include spots with no partner)
 * @param options - pixel sizes (nm/px), tolerances, iteration bounds and seed
 * @returns proposed pairs, the refined transform and diagnostics
 * @throws AnalysisError `too_few_fiducials` (< 3 candidates on a side), `no_consistent_pairing` (fewer than `minInliers` inliers)
 * @see M. A. Fischler, R. C. Bolles, "Random sample consensus", Commun. ACM 24(6), 1981
 */
export function findPairsRansac(
  afmCandidates: readonly Point[],
  flCandidates: readonly Point[],
  options: FindPairsRansacOptions,
): FindPairsRansacResult {
  const {
    afmPixelNm,
    flPixelNm,
    scaleTolerance = 0.2,
    inlierTolerancePx = 2,
    nbNeighbours = 5,
    sideRatioTolerance = 0.05,
    maxIterations = 3000,
    maxRefineIterations = 20,
    allowMirror = true,
    minInliers = 5,
    seed = 1,
    model = 'affine',
  } = options;
  if (!(afmPixelNm > 0) || !(flPixelNm > 0)) {
    throw new RangeError(`pixel sizes must be positive nm values; got afm ${afmPixelNm}, fl ${flPixelNm}`);
  }
  if (afmCandidates.length < 3 || flCandidates.length < 3) {
    throw new AnalysisError(
      'too_few_fiducials',
      `Automatic pairing needs at least 3 candidates per image; got ${afmCandidates.length} AFM and ${flCandidates.length} fluorescence.`,
      { nbAfm: afmCandidates.length, nbFl: flCandidates.length },
    );
  }
  const expected = afmPixelNm / flPixelNm;
  const lo = expected * (1 - scaleTolerance);
  const hi = expected * (1 + scaleTolerance);

  // triangles and their shape index
  const afmTriangles = buildTriangles(afmCandidates, nbNeighbours, 0.05);
  const flTriangles = buildTriangles(flCandidates, nbNeighbours, 0.05);
  const shapeIndex = new KDBush(Math.max(flTriangles.length, 1));
  for (const t of flTriangles) shapeIndex.add(t.ratioShort, t.ratioMid);
  if (flTriangles.length === 0) shapeIndex.add(-10, -10);
  shapeIndex.finish();
  const hypotheses: [number, number][] = [];
  afmTriangles.forEach((ta, ia) => {
    for (const jf of shapeIndex.within(ta.ratioShort, ta.ratioMid, sideRatioTolerance)) {
      if (jf >= flTriangles.length) continue;
      const sizeRatio = flTriangles[jf].longestPx / ta.longestPx;
      if (sizeRatio >= lo && sizeRatio <= hi) hypotheses.push([ia, jf]);
    }
  });

  // choose which hypotheses to score: all if few, else a seeded random sample
  const random = mulberry32(seed);
  let order = hypotheses.map((_, i) => i);
  if (hypotheses.length > maxIterations) {
    for (let i = 0; i < maxIterations; i++) {
      const j = i + Math.floor(random() * (order.length - i));
      [order[i], order[j]] = [order[j], order[i]];
    }
    order = order.slice(0, maxIterations);
  }

  // score
  const flTree = buildPointIndex(flCandidates);
  const maxPossible = Math.min(afmCandidates.length, flCandidates.length);
  let best: { transform: Affine; inliers: number; spread: number } | null = null;
  let nbIterations = 0;
  for (const h of order) {
    nbIterations++;
    const ta = afmTriangles[hypotheses[h][0]];
    const tf = flTriangles[hypotheses[h][1]];
    const p3 = ta.v.map((i) => afmCandidates[i]);
    const q3 = tf.v.map((i) => flCandidates[i]);
    const transform = model === 'affine' ? affineFromThree(p3, q3) : similarityFromThree(p3, q3, allowMirror, inlierTolerancePx);
    if (transform === null) continue;
    const [sMax, sMin] = singularValues(transform);
    if (sMax > hi || sMin < lo) continue;
    if (!allowMirror && transform[0] * transform[4] - transform[1] * transform[3] < 0) continue;
    const matches = matchPoints(afmCandidates, flCandidates, flTree, transform, inlierTolerancePx);
    let spread = 0;
    for (const m of matches.values()) spread += m.distancePx;
    if (best === null || matches.size > best.inliers || (matches.size === best.inliers && spread < best.spread)) {
      best = { transform, inliers: matches.size, spread };
      if (matches.size === maxPossible) break;
    }
  }
  const refuse = (inliers: number) =>
    new AnalysisError(
      'no_consistent_pairing',
      `No transform with a scale near ${expected.toPrecision(3)} fluorescence px per AFM px matched ${minInliers} or more ` +
        `candidates within ${inlierTolerancePx} px (best: ${inliers}); place 3 fiducials by hand.`,
      { nbHypotheses: hypotheses.length, bestInliers: inliers, minInliers },
    );
  if (best === null || best.inliers < minInliers) throw refuse(best?.inliers ?? 0);

  // refine: re-match and refit until the matching stops changing
  let transform = best.transform;
  let previousKey = '';
  let finalMatches = matchPoints(afmCandidates, flCandidates, flTree, transform, inlierTolerancePx);
  for (let round = 0; round < maxRefineIterations; round++) {
    const entries = [...finalMatches.entries()].sort((x, y) => x[1].afmIndex - y[1].afmIndex);
    const key = entries.map(([f, m]) => `${m.afmIndex}:${f}`).join(',');
    if (key === previousKey || entries.length < 3) break;
    previousKey = key;
    try {
      transform = fitModel(entries.map(([, m]) => afmCandidates[m.afmIndex]), entries.map(([f]) => flCandidates[f]), { model, allowReflection: allowMirror }).flFromAfm;
    } catch (error) {
      if (error instanceof AnalysisError) break;
      throw error;
    }
    finalMatches = matchPoints(afmCandidates, flCandidates, flTree, transform, inlierTolerancePx);
  }

  const pairs: ProposedPair[] = [...finalMatches.entries()]
    .sort((x, y) => x[1].afmIndex - y[1].afmIndex)
    .map(([flIndex, m]) => {
      const afm = { ...afmCandidates[m.afmIndex] };
      const fl = { ...flCandidates[flIndex] };
      const q = applyAffine(transform, afm);
      return { afmIndex: m.afmIndex, flIndex, afm, fl, residualPx: Math.hypot(q.x - fl.x, q.y - fl.y) };
    });
  if (pairs.length < minInliers) throw refuse(pairs.length);
  const rmsResidualPx = Math.sqrt(pairs.reduce((s, p) => s + p.residualPx ** 2, 0) / Math.max(pairs.length, 1));
  return {
    pairs,
    model,
    flFromAfm: transform,
    nbInliers: pairs.length,
    rmsResidualPx,
    nbFiducials: pairs.length,
    nbHypotheses: hypotheses.length,
    nbIterations,
  };
}
