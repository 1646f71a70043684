import { describe, expect, it } from 'vitest';
import { createRng } from '../../synthetic/random';
import { renderCorrelativeChannel } from '../../synthetic/renderCorrelativeChannel';
import { estimateChannelRegistration } from '../estimateChannelRegistration';
import type { Affine } from '../../types';

// AFM px → fluorescence px: 10/65 scale, mirrored, a translation; beads 20 nm across (point-like at 65 nm/px)
const common: Affine = [-10 / 65, 0, 100, 0, 10 / 65, 20];
const beadsAfm = [{ x: 60, y: 80 }, { x: 300, y: 120 }, { x: 150, y: 400 }, { x: 420, y: 380 }, { x: 250, y: 250 }];
const camera = { offsetCounts: 100, gainCountsPerPhoton: 1.8, readNoiseCounts: 2 };

function frame(shiftPx: { x: number; y: number }, sigmaPx: number, seed: number, nbBeads = beadsAfm.length) {
  const emitters = beadsAfm.slice(0, nbBeads).map((p) => ({
    x: common[0] * p.x + common[1] * p.y + common[2] + shiftPx.x, y: common[3] * p.x + common[4] * p.y + common[5] + shiftPx.y, photons: 20000,
  }));
  // a Gaussian PSF of σ = sigmaPx: widthFactor·0.21λ/NA/px with λ = 600, NA = 1.4, 65 nm/px → 1.3846 px at 1
  return renderCorrelativeChannel({
    widthPx: 128, heightPx: 128, emitters, psf: 'gaussian', emissionNm: 600, numericalAperture: 1.4, pixelSizeNm: 65,
    widthFactor: sigmaPx / 1.3846, backgroundPhotonsPerPx: 100, backgroundSlopePerPx: { x: 0.1, y: 0 }, camera, rng: createRng(seed),
  }).raster;
}

describe('estimateChannelRegistration', () => {
  it('recovers each channel\'s chromatic shift and PSF width from the beads', () => {
    // Truth: shifts of 0, 1.08 and 2.15 px (0, 70, 140 nm); σ 1.5 and 1.7 px. Localisation precision of a
    // 20 000-photon spot on 100 photons/px is ~0.01 px (Thompson et al. 2002, docs/references.md §4), so the mean
    // over 5 beads is checked to 0.05 px. The fit of a point-sampled Gaussian to pixel-integrated light gives
    // σ² + 1/12, which the estimate removes; checked to 3 %.
    const bead = beadsAfm.map((p) => ({ afmPx: p, diameterNm: 20 }));
    const shifts = [{ x: 0, y: 0 }, { x: 0.935, y: 0.54 }, { x: 1.87, y: 1.08 }];
    const sigmas = [1.5, 1.6, 1.7];
    const channels = shifts.map((s, c) => ({ marker: `M${c}`, raster: frame(s, sigmas[c], c + 1), sigmaPx: 1.4 }));
    const r = estimateChannelRegistration(common, bead, channels, { flPixelNm: 65 });
    shifts.forEach((s, c) => {
      const ch = r.channels[`M${c}`];
      expect(ch.source).toBe('beads');
      expect(ch.nbBeads).toBe(5);
      expect(Math.abs(ch.offsetFlPx.x - s.x)).toBeLessThan(0.05);
      expect(Math.abs(ch.offsetFlPx.y - s.y)).toBeLessThan(0.05);
      expect(ch.flFromAfm[2]).toBeCloseTo(common[2] + ch.offsetFlPx.x, 10);
      expect(ch.flFromAfm[0]).toBe(common[0]);
      expect(Math.abs(ch.psfSigmaPx! / sigmas[c] - 1)).toBeLessThan(0.03);
    });
    expect(r.warnings).toEqual([]);
  });

  it('falls back to the common transform, with a warning, when a channel shows fewer than 3 beads', () => {
    const bead = beadsAfm.map((p) => ({ afmPx: p, diameterNm: 20 }));
    const r = estimateChannelRegistration(common, bead, [{ marker: 'CD81', raster: frame({ x: 1, y: 0 }, 1.5, 9, 2), sigmaPx: 1.4 }], { flPixelNm: 65 });
    expect(r.channels.CD81.source).toBe('common');
    expect(r.channels.CD81.nbBeads).toBe(2);
    expect(r.channels.CD81.offsetFlPx).toEqual({ x: 0, y: 0 });
    expect(r.channels.CD81.flFromAfm).toEqual(common);
    expect(r.channels.CD81.psfSigmaPx).toBeNull();
    expect(r.warnings).toHaveLength(1);
    expect(r.warnings[0]).toMatch(/CD81: 2 beads seen \(at least 3 needed\)/);
  });
});
