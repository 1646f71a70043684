/**
 * The camera-noise rule must not drift with sample density: the same labelled vesicles, imaged once on a clean
 * background and once among free dye and dim emitters, get the same null and the same calls. Frames are rendered
 * with a PSF 15 % wider than the fitted one, gain 1.5 and read noise 2 counts (no inverse crime).
 */
import { describe, expect, it } from 'vitest';
import { calibrateNullZ } from '../calibrateNullZ';
import { linkVesicles } from '../linkVesicles';
import { backgroundAmplitudeThreshold } from '../backgroundAmplitudeThreshold';
import { DEFAULT_Z_CRITICAL } from '../describeMarkerCallRule';
import { correctBackground } from '../../fluorescence/correctBackground';
import { detectSpots } from '../../fluorescence/detectSpots';
import { renderFluorescenceScene } from '../../fluorescence/renderFluorescenceScene';
import { createTestRng } from '../../fluorescence/__tests__/helpers';
import type { Point } from '../../types';

const SIGMA = 1.3;
const CAMERA = { offsetCounts: 100, gainCountsPerPhoton: 1.5, readNoiseCounts: 2 };
const SIZE = 320;

function scene(dense: boolean) {
  const rng = createTestRng(900);
  // the same 64 vesicles in both scenes, half labelled with 300–900 photons
  const vesicles: Point[] = [];
  const labelled: boolean[] = [];
  const emitters: { x: number; y: number; photons: number }[] = [];
  for (let gy = 0; gy < 8; gy++) {
    for (let gx = 0; gx < 8; gx++) {
      const v = { x: 20 + 20 * gx + 2 * rng.uniform(), y: 20 + 20 * gy + 2 * rng.uniform() };
      vesicles.push(v);
      const on = rng.uniform() < 0.5;
      labelled.push(on);
      if (on) emitters.push({ ...v, photons: 300 + 600 * rng.uniform() });
    }
  }
  // dense: 250 free dye spots (300–2000 photons) and 500 dim emitters (60–250 photons) everywhere else
  const extra = createTestRng(901);
  const far = (p: Point) => vesicles.every((v) => Math.hypot(v.x - p.x, v.y - p.y) > 6 * SIGMA);
  let nbDye = 0;
  let nbDim = 0;
  while (dense && (nbDye < 250 || nbDim < 500)) {
    const p = { x: 4 + (SIZE - 8) * extra.uniform(), y: 4 + (SIZE - 8) * extra.uniform() };
    if (!far(p)) continue;
    if (nbDye < 250) {
      emitters.push({ ...p, photons: 300 + 1700 * extra.uniform() });
      nbDye++;
    } else {
      emitters.push({ ...p, photons: 60 + 190 * extra.uniform() });
      nbDim++;
    }
  }
  const { raster } = renderFluorescenceScene({
    widthPx: SIZE, heightPx: SIZE, sigmaPx: 1.15 * SIGMA, spots: emitters, rng: createTestRng(dense ? 902 : 903),
    backgroundPhotonsPerPx: 100, backgroundSlopePerPx: { x: 0.05, y: 0 }, cameraOffsetCounts: CAMERA.offsetCounts,
    gainCountsPerPhoton: CAMERA.gainCountsPerPhoton, readNoiseCounts: CAMERA.readNoiseCounts,
  });
  // as analyzeField does: spots at the usual threshold, dim ones at 3 robust SDs
  const bg = correctBackground(raster, { cameraOffsetCounts: CAMERA.offsetCounts });
  const spots = detectSpots(bg.corrected, { sigmaPx: SIGMA, background: bg.background }).spots;
  const dim = detectSpots(bg.corrected, { sigmaPx: SIGMA, thresholdK: 3, background: bg.background, refine: 'centroid' }).spots;
  const nullZ = calibrateNullZ(raster, [...vesicles, ...spots, ...dim], { sigmaPx: SIGMA, camera: CAMERA, sourcesPx: [...spots, ...dim] });
  const link = linkVesicles(vesicles, { CD63: spots }, { CD63: raster }, {
    sigmaPxByMarker: { CD63: SIGMA }, camera: CAMERA, sourceSpotsByMarker: { CD63: [...dim, ...spots] },
    ruleByMarker: { CD63: { rule: 'camera_noise', zCritical: DEFAULT_Z_CRITICAL, nullCalibration: nullZ } },
  });
  // the rule this replaces: mean + 3 SD of amplitudes at places that avoid only the detected spots
  const old = backgroundAmplitudeThreshold(raster, [...vesicles, ...spots], { sigmaPx: SIGMA });
  const calls = link.vesicles.map((v) => v.channels.CD63.positive);
  return { nullZ, calls, labelled, old };
}

describe('null calibration at empty places', () => {
  it('keeps the camera-noise threshold and the calls when free dye and dim emitters crowd the frame', () => {
    const sparse = scene(false);
    const dense = scene(true);
    // a Poisson frame under the right camera model: z at empty places is N(0, 1) (median 0, MAD 1; the MAD of
    // ~300 values is known to ±6 %, so 0.85–1.15)
    for (const s of [sparse, dense]) {
      expect(s.nullZ.calibrated).toBe(true);
      expect(s.nullZ.nbPlaces).toBeGreaterThanOrEqual(100);
      expect(Math.abs(s.nullZ.medianZ)).toBeLessThan(0.2);
      expect(s.nullZ.madZ).toBeGreaterThan(0.85);
      expect(s.nullZ.madZ).toBeLessThan(1.15);
    }
    // the z a vesicle must pass, median + z_crit·MAD, moves by less than 0.4 z between the scenes
    const cut = (s: typeof sparse) => s.nullZ.medianZ + DEFAULT_Z_CRITICAL * s.nullZ.madZ;
    expect(Math.abs(cut(dense) - cut(sparse))).toBeLessThan(0.4);
    // the calls of the same vesicles agree (noise differs between the two renderings, so allow 3 of 64)
    const agree = sparse.calls.filter((c, i) => c === dense.calls[i]).length;
    expect(agree).toBeGreaterThanOrEqual(61);
    for (const s of [sparse, dense]) {
      const right = s.calls.filter((c, i) => c === s.labelled[i]).length;
      expect(right).toBeGreaterThanOrEqual(60);
    }
    // the replaced rule's threshold grows with density: mean and SD take in the undetected dim emitters
    expect(dense.old.thresholdCounts / sparse.old.thresholdCounts).toBeGreaterThan(1.1);
  });
});
