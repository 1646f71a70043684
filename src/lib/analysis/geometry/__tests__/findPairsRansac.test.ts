import { describe, expect, it } from 'vitest';
import type { Affine, Point } from '../../types';
import { applyAffine } from '../applyAffine';
import { findPairsRansac } from '../findPairsRansac';
import { createGaussian, frozenPoints } from './randomHelpers';

/** 25 true beads in a 1000×1000 AFM px field, ≥ 40 px apart; ~30% extra random candidates per side. */
function scene(truth: Affine, seed: number) {
  const { uniform, normal } = createGaussian(seed);
  const beads: Point[] = [];
  while (beads.length < 25) {
    const p = { x: 1000 * uniform(), y: 1000 * uniform() };
    if (beads.every((b) => Math.hypot(b.x - p.x, b.y - p.y) > 40)) beads.push(p);
  }
  const afm = [...beads];
  const fl = beads.map((p) => {
    const q = applyAffine(truth, p);
    return { x: q.x + 0.03 * normal(), y: q.y + 0.03 * normal() };
  });
  // 11 outliers of 36 on each side = 30.6%
  for (let i = 0; i < 11; i++) afm.push({ x: 1000 * uniform(), y: 1000 * uniform() });
  const flXs = fl.map((q) => q.x);
  const flYs = fl.map((q) => q.y);
  const [x0, x1, y0, y1] = [Math.min(...flXs), Math.max(...flXs), Math.min(...flYs), Math.max(...flYs)];
  for (let i = 0; i < 11; i++) fl.push({ x: x0 + (x1 - x0) * uniform(), y: y0 + (y1 - y0) * uniform() });
  // shuffle the fluorescence list so indices carry no pairing
  const order = fl.map((_, i) => i);
  for (let i = order.length - 1; i > 0; i--) {
    const j = Math.floor(uniform() * (i + 1));
    [order[i], order[j]] = [order[j], order[i]];
  }
  return { afm: frozenPoints(afm), fl: frozenPoints(order.map((i) => fl[i])), flIndexOfBead: beads.map((_, b) => order.indexOf(b)) };
}

/** Largest displacement between two maps over the corners of the AFM field (fluorescence px). */
function maxDifferencePx(a: Affine, b: Affine): number {
  const corners = [{ x: 0, y: 0 }, { x: 1000, y: 0 }, { x: 0, y: 1000 }, { x: 1000, y: 1000 }];
  return Math.max(...corners.map((p) => {
    const qa = applyAffine(a, p);
    const qb = applyAffine(b, p);
    return Math.hypot(qa.x - qb.x, qa.y - qb.y);
  }));
}

describe('findPairsRansac', () => {
  const cases: [string, Affine][] = [
    ['rotated and sheared', [0.49 * Math.cos(0.2), -0.5 * Math.sin(0.2) + 0.01, 37, 0.49 * Math.sin(0.2), 0.5 * Math.cos(0.2), -20]],
    ['mirrored', [0.48 * Math.cos(-0.4), 0.5 * Math.sin(-0.4), 300, 0.48 * Math.sin(-0.4), -0.5 * Math.cos(-0.4), 450]],
  ];
  for (const [name, truth] of cases) {
    it(`recovers a known ${name} transform within 0.1 px with 30% outlier candidates`, () => {
      const { afm, fl, flIndexOfBead } = scene(truth, name.length);
      const r = findPairsRansac(afm, fl, { afmPixelNm: 10, flPixelNm: 20, seed: 7 });
      // 0.1 px over the whole field (brief's requirement); bead noise σ = 0.03 px makes the LS error ≈ 0.02 px.
      expect(maxDifferencePx(r.flFromAfm, truth)).toBeLessThan(0.1);
      // every true bead found with its true partner; outliers can match only by chance (tolerance 2 px)
      const found = new Map(r.pairs.map((p) => [p.afmIndex, p.flIndex]));
      flIndexOfBead.forEach((flIndex, bead) => expect(found.get(bead)).toBe(flIndex));
      expect(r.nbInliers).toBeGreaterThanOrEqual(25);
      expect(r.nbInliers).toBeLessThanOrEqual(27);
      expect(r.rmsResidualPx).toBeLessThan(0.1);
      // deterministic for a seed
      expect(findPairsRansac(afm, fl, { afmPixelNm: 10, flPixelNm: 20, seed: 7 }).flFromAfm).toEqual(r.flFromAfm);
    });
  }

  it('refuses a mirrored scene when mirrors are not allowed (no_consistent_pairing)', () => {
    const { afm, fl } = scene(cases[1][1], 8);
    expect(() => findPairsRansac(afm, fl, { afmPixelNm: 10, flPixelNm: 20, allowMirror: false })).toThrow(
      expect.objectContaining({ code: 'no_consistent_pairing' }),
    );
  });
});
