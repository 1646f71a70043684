import { describe, expect, it } from 'vitest';
import { linkVesicles } from '../linkVesicles';
import { backgroundApertureThreshold } from '../backgroundApertureThreshold';
import { backgroundAmplitudeThreshold } from '../backgroundAmplitudeThreshold';
import { correctBackground } from '../../fluorescence/correctBackground';
import { detectSpots } from '../../fluorescence/detectSpots';
import { renderFluorescenceScene } from '../../fluorescence/renderFluorescenceScene';
import type { FluorescenceSpot } from '../../fluorescence/types';
import type { Raster } from '../../types';
import { createTestRng, snapshot } from '../../fluorescence/__tests__/helpers';

const SIGMA = 1.3;
const MARKERS = ['CD9', 'CD63', 'CD81'];

describe('linkVesicles', () => {
  it('calls ≥ 95 % of markers right on a synthetic scene (300–600 photons over 100 photons/px)', () => {
    // Scene per the brief: 169 vesicles on a jittered 18-px grid, each marker present with p = 0.5 at 300–600 photons,
    // background 100 photons/px, offset 100, Poisson noise. The joint amplitude is called (the default), so the
    // thresholds are mean + 3 SD of amplitudes fitted at empty places (docs/references.md §9, common practice); they were
    // aperture thresholds while apertures were called. Expected accuracy ~99 % (SE of a PSF amplitude ≈ 55 counts, so the
    // threshold is ≈ 165 counts and a 300-photon vesicle sits ~2.5 SE above it, most carry more);
    // the brief's bar is 95 %. Four free spots (2000 photons) with no vesicle per channel must be counted as unmatched,
    // and two vesicles mapped outside the frame must be flagged, not dropped.
    const rng = createTestRng(41);
    const vesicles: { x: number; y: number }[] = [];
    for (let gy = 0; gy < 13; gy++) for (let gx = 0; gx < 13; gx++) vesicles.push({ x: 20 + 18 * gx + rng.uniform() * 2, y: 20 + 18 * gy + rng.uniform() * 2 });
    const truth: Record<string, boolean[]> = {};
    const rasters: Record<string, Raster> = {};
    const spots: Record<string, FluorescenceSpot[]> = {};
    const thresholds: Record<string, number> = {};
    const free = [{ x: 29, y: 29 }, { x: 101, y: 119 }, { x: 173, y: 65 }, { x: 209, y: 209 }];
    for (const marker of MARKERS) {
      truth[marker] = vesicles.map(() => rng.uniform() < 0.5);
      const scene = [
        ...vesicles.flatMap((v, i) => (truth[marker][i] ? [{ ...v, photons: 300 + 300 * rng.uniform() }] : [])),
        ...free.map((f) => ({ ...f, photons: 2000 })),
      ];
      rasters[marker] = renderFluorescenceScene({ widthPx: 256, heightPx: 256, sigmaPx: SIGMA, spots: scene, rng, backgroundPhotonsPerPx: 100, cameraOffsetCounts: 100 }).raster;
      const { corrected, background } = correctBackground(rasters[marker], { cameraOffsetCounts: 100, tileSizePx: 32 });
      spots[marker] = detectSpots(corrected, { sigmaPx: SIGMA, background }).spots;
      thresholds[marker] = backgroundAmplitudeThreshold(rasters[marker], [...vesicles, ...spots[marker]], { sigmaPx: SIGMA }).thresholdCounts;
    }
    const mapped = [...vesicles, { x: -12, y: 40 }, { x: 100, y: 300 }];
    const before = MARKERS.map((m) => snapshot(rasters[m]));
    const frozen = structuredClone(mapped);
    const sigmaPxByMarker = Object.fromEntries(MARKERS.map((m) => [m, SIGMA]));
    const result = linkVesicles(mapped, spots, rasters, { sigmaPxByMarker, thresholdCountsByMarker: thresholds });

    let right = 0;
    for (const marker of MARKERS) vesicles.forEach((_, i) => (result.vesicles[i].channels[marker].positive === truth[marker][i] ? right++ : 0));
    expect(right / (3 * vesicles.length)).toBeGreaterThanOrEqual(0.95);

    expect(result.nbVesicles).toBe(171);
    expect(result.nbOutOfFrame).toBe(2);
    expect(result.vesicles[169].phenotype).toBe('CD9? CD63? CD81?');
    const first = result.vesicles[0];
    expect(first.phenotype).toBe(MARKERS.map((m) => `${m}${first.channels[m].positive ? '+' : '-'}`).join(' '));
    const trulyNone = vesicles.filter((_, i) => MARKERS.every((m) => !truth[m][i])).length;
    expect(Math.abs(result.nbVesiclesWithoutMarker - trulyNone)).toBeLessThanOrEqual(3);
    for (const marker of MARKERS) expect(result.unmatchedSpotsByMarker[marker]).toBe(free.length);
    // a bright labelled vesicle has its detected spot matched
    const matched = vesicles.filter((_, i) => truth.CD9[i] && result.vesicles[i].channels.CD9.spotIndex !== null).length;
    expect(matched).toBeGreaterThan(0);

    MARKERS.forEach((m, k) => expect(rasters[m].data).toEqual(before[k]));
    expect(mapped).toEqual(frozen);
  });

  it('calls a bright labelled vesicle positive and its unlabelled neighbours 2 px (130 nm) away negative', () => {
    // The crowded scene of the work item: 20 bright labelled vesicles (2500 photons), each with one unlabelled
    // neighbour 2 px away (130 nm at 65 nm/px, well inside the PSF: σ = 1.3 px), over 100 photons/px, offset 100,
    // Poisson noise. An aperture (radius 2σ) round a neighbour collects much of the bright light, so it exceeds the
    // aperture threshold; the joint NNLS amplitude gives that light to the labelled vesicle. Both thresholds are
    // mean + 3 SD at empty places (docs/references.md §9, common practice), each in its own quantity.
    const rng = createTestRng(43);
    const bright: { x: number; y: number; photons: number }[] = [];
    const neighbours: { x: number; y: number }[] = [];
    for (let gy = 0; gy < 4; gy++) {
      for (let gx = 0; gx < 5; gx++) {
        const x = 20 + 30 * gx + rng.uniform();
        const y = 20 + 30 * gy + rng.uniform();
        const angle = 2 * Math.PI * rng.uniform();
        bright.push({ x, y, photons: 2500 });
        neighbours.push({ x: x + 2 * Math.cos(angle), y: y + 2 * Math.sin(angle) });
      }
    }
    const raster = renderFluorescenceScene({
      widthPx: 170, heightPx: 140, sigmaPx: SIGMA, spots: bright, rng, backgroundPhotonsPerPx: 100, cameraOffsetCounts: 100,
    }).raster;
    const positions = bright.flatMap((b, i) => [{ x: b.x, y: b.y }, neighbours[i]]);
    const { corrected, background } = correctBackground(raster, { cameraOffsetCounts: 100, tileSizePx: 32 });
    const spots = { CD63: detectSpots(corrected, { sigmaPx: SIGMA, background }).spots };
    const avoid = [...positions, ...spots.CD63];
    const amplitudeThreshold = backgroundAmplitudeThreshold(raster, avoid, { sigmaPx: SIGMA }).thresholdCounts;
    const apertureThreshold = backgroundApertureThreshold(raster, avoid, { sigmaPx: SIGMA }).thresholdCounts;
    const common = { sigmaPxByMarker: { CD63: SIGMA } };
    const joint = linkVesicles(positions, spots, { CD63: raster }, { ...common, thresholdCountsByMarker: { CD63: amplitudeThreshold } });
    const aperture = linkVesicles(positions, spots, { CD63: raster }, {
      ...common, thresholdCountsByMarker: { CD63: apertureThreshold }, positivityMeasure: 'aperture',
    });

    // SE of a lone PSF amplitude ≥ √(100·4πσ²) ≈ 46 counts (least-squares variance σ²/Σf² with Σf² ≈ 1/(4πσ²);
    // computed), ≈ 55 with the background fitted in the window, so the threshold is ≈ 3 SE ≈ 150 counts.
    // A neighbour's amplitude SE is larger (its column correlates with the bright one's), so each crosses by chance
    // with p ≈ 1 %; this seed has none.
    expect(amplitudeThreshold).toBeGreaterThan(100);
    expect(amplitudeThreshold).toBeLessThan(200);
    for (let i = 0; i < 20; i++) {
      const b = joint.vesicles[2 * i].channels.CD63;
      const n = joint.vesicles[2 * i + 1].channels.CD63;
      expect(b.positive).toBe(true);
      expect(n.positive).toBe(false);
      // the bright one keeps its light: 2500 within 4 SE (SE inflated by the pair's correlation)
      expect(Math.abs(b.amplitudeCounts! - 2500)).toBeLessThan(4 * b.amplitudeStdErrCounts!);
      expect(n.amplitudeCounts!).toBeLessThan(amplitudeThreshold);
      // the aperture of the neighbour holds several hundred counts of the bright light: called positive that way
      expect(n.apertureCounts!).toBeGreaterThan(3 * apertureThreshold);
      expect(aperture.vesicles[2 * i + 1].channels.CD63.positive).toBe(true);
      // aperture intensity and SNR stay reported
      expect(n.apertureSnr!).toBeGreaterThan(3);
    }
    expect(joint.positiveByMarker.CD63).toBe(20);
    expect(aperture.positiveByMarker.CD63).toBe(40);
  });

  it('gives a fiducial bead its own light: an unlabelled vesicle 2 px from a bright bead stays negative', () => {
    // Beads are not vesicles, but they shine in every channel (6000 photons here, as in the demo scenes). Without
    // a column of their own in the joint fit, the bead's light can only go to the vesicle next to it.
    const rng = createTestRng(47);
    const beads = [{ x: 30.3, y: 30.6, photons: 6000 }, { x: 90.7, y: 40.2, photons: 6000 }, { x: 60.1, y: 90.8, photons: 6000 }];
    const vesiclesFl = beads.map((b, i) => ({ x: b.x + 2 * Math.cos(i), y: b.y + 2 * Math.sin(i) }));
    const raster = renderFluorescenceScene({
      widthPx: 130, heightPx: 130, sigmaPx: SIGMA, spots: beads, rng, backgroundPhotonsPerPx: 100, cameraOffsetCounts: 100,
    }).raster;
    const avoid = [...vesiclesFl, ...beads];
    const threshold = backgroundAmplitudeThreshold(raster, avoid, { sigmaPx: SIGMA }).thresholdCounts;
    const options = { sigmaPxByMarker: { CD63: SIGMA }, thresholdCountsByMarker: { CD63: threshold } };
    const without = linkVesicles(vesiclesFl, {}, { CD63: raster }, options);
    const withBeads = linkVesicles(vesiclesFl, {}, { CD63: raster }, { ...options, otherSourcesPx: beads });
    expect(withBeads.vesicles).toHaveLength(3);
    for (let i = 0; i < 3; i++) {
      // alone in the fit, the vesicle takes most of the bead's 6000 counts (it sits 2 px = 1.5 σ away)
      expect(without.vesicles[i].channels.CD63.amplitudeCounts!).toBeGreaterThan(2000);
      expect(without.vesicles[i].channels.CD63.positive).toBe(true);
      expect(withBeads.vesicles[i].channels.CD63.amplitudeCounts!).toBeLessThan(threshold);
      expect(withBeads.vesicles[i].channels.CD63.positive).toBe(false);
    }
    expect(withBeads.positiveByMarker.CD63).toBe(0);
  });
});
