import { describe, expect, it } from 'vitest';
import type { Affine, Point } from '../../types';
import { applyAffine } from '../applyAffine';
import { evaluateRegistration } from '../evaluateRegistration';
import { predictTre } from '../predictTre';
import { proposePartner } from '../proposePartner';
import { snapToNearest } from '../snapToNearest';
import type { FiducialPair } from '../types';
import { createGaussian } from './randomHelpers';

// AFM 10 nm/px, fluorescence 20 nm/px → expected 0.5 fluorescence px per AFM px.
const MIRRORED: Affine = [0.49, 0.03, 400, 0.02, -0.5, 300];
const AFM: Point[] = [
  { x: 12, y: 30 }, { x: 980, y: 44 }, { x: 510, y: 990 }, { x: 250, y: 260 }, { x: 760, y: 700 }, { x: 90, y: 850 },
];

describe('evaluateRegistration', () => {
  it('reports a mirrored map, FRE in nm, σ, predicted and leave-one-out TRE', () => {
    const { normal } = createGaussian(3);
    const pairs: FiducialPair[] = AFM.map((p) => {
      const q = applyAffine(MIRRORED, p);
      return { afm: p, fl: { x: q.x + 0.2 * normal(), y: q.y + 0.2 * normal() } };
    });
    const frozen = JSON.stringify(pairs);
    const r = evaluateRegistration(pairs, { afmPixelNm: 10, flPixelNm: 20 });
    expect(JSON.stringify(pairs)).toBe(frozen);
    expect(r.mirrored).toBe(true);
    expect(r.description.startsWith('mirrored; ')).toBe(true);
    expect(r.nbFiducials).toBe(6);
    expect(r.warnings).toEqual([]);
    // FRE (nm) = RMS residual (px) × 20 nm/px; σ² = RSS/(2N − 6)
    expect(r.freNm).toBeCloseTo(r.rmsResidualPx * 20, 10);
    const rss = r.residualsPx.reduce((s, e) => s + e * e, 0);
    expect(r.sigmaPx as number).toBeCloseTo(Math.sqrt(rss / 6), 10);
    // predicted TRE at the centroid is σ·√(2/N) (d = 0) — docs/references.md §1
    expect(r.predictedTreAtCentroidNm as number).toBeCloseTo(20 * (r.sigmaPx as number) * Math.sqrt(2 / 6), 9);
    const direct = predictTre(AFM, AFM, { sigmaPx: r.sigmaPx as number }).rmsTrePx.map((t) => t * 20);
    r.predictedTreAtFiducialsNm!.forEach((t, i) => expect(t).toBeCloseTo(direct[i], 9));
    expect(r.leaveOneOutTreNm).toHaveLength(6);
    expect(r.leaveOneOutTreRmsNm as number).toBeGreaterThan(r.freNm);
  });

  it('warns when 3 pairs give no error estimate', () => {
    const pairs = AFM.slice(0, 3).map((p) => ({ afm: p, fl: applyAffine(MIRRORED, p) }));
    const r = evaluateRegistration(pairs, { afmPixelNm: 10, flPixelNm: 20 });
    expect(r.warnings.map((w) => w.code)).toEqual(['no_error_estimate']);
    expect(r.sigmaPx).toBeNull();
    expect(r.leaveOneOutTreNm).toBeNull();
  });

  it('warns on nearly collinear fiducials and on a scale far from the pixel-size ratio', () => {
    const thin = [{ x: 0, y: 0 }, { x: 300, y: 3 }, { x: 600, y: -2 }, { x: 900, y: 4 }];
    const pairs = thin.map((p) => ({ afm: p, fl: applyAffine(MIRRORED, p) }));
    const codes = evaluateRegistration(pairs, { afmPixelNm: 10, flPixelNm: 20 }).warnings.map((w) => w.code);
    expect(codes).toContain('nearly_collinear');
    // recorded sizes claim 0.25 px/px, the fit finds ≈ 0.5: off by far more than 20%
    const wrong = evaluateRegistration(
      AFM.map((p) => ({ afm: p, fl: applyAffine(MIRRORED, p) })),
      { afmPixelNm: 5, flPixelNm: 20 },
    ).warnings.map((w) => w.code);
    expect(wrong).toEqual(['scale_mismatch', 'scale_mismatch']);
  });

  it('supports the similarity model with a mirror', () => {
    const sim: Affine = [0.5 * Math.cos(0.3), 0.5 * Math.sin(0.3), 5, 0.5 * Math.sin(0.3), -0.5 * Math.cos(0.3), 7];
    const pairs = AFM.map((p) => ({ afm: p, fl: applyAffine(sim, p) }));
    const r = evaluateRegistration(pairs, { afmPixelNm: 10, flPixelNm: 20, model: 'similarity' });
    expect(r.similarity?.mirrored).toBe(true);
    expect(r.mirrored).toBe(true);
    expect(r.rmsResidualPx).toBeLessThan(1e-9);
  });
});

describe('snapToNearest / proposePartner', () => {
  const spots = [{ x: 10, y: 10 }, { x: 50, y: 52 }, { x: 53, y: 50 }];
  it('snaps to the nearest candidate within the radius, else null', () => {
    expect(snapToNearest({ x: 52, y: 50.5 }, spots, 5)).toEqual({ index: 2, point: { x: 53, y: 50 }, distancePx: Math.hypot(1, 0.5) });
    expect(snapToNearest({ x: 30, y: 30 }, spots, 5)).toBeNull();
    expect(snapToNearest({ x: 30, y: 30 }, [], 5)).toBeNull();
  });
  it('maps the AFM point with the transform, then snaps', () => {
    const r = proposePartner({ x: 100, y: 104 }, [0.5, 0, 0, 0, 0.5, 0], spots, { maxDistancePx: 2 });
    expect(r.predicted).toEqual({ x: 50, y: 52 });
    expect(r.candidate?.index).toBe(1);
  });
});
