/** k per marker is z_crit of the camera-noise rule: calibrated z > k (k SDs of the empty places' null, docs/references.md §6). */
import { beforeAll, describe, expect, it } from 'vitest';
import { analyzeField, type AnalyzeFieldInput, type AnalyzeFieldResult } from '..';
import { makeFieldScene } from './fieldScene';

describe('analyzeField with a k per marker', () => {
  let input: AnalyzeFieldInput;
  let k3: AnalyzeFieldResult;
  let k5: AnalyzeFieldResult;

  beforeAll(() => {
    const scene = makeFieldScene();
    input = {
      heightNm: scene.afm.raster, afmPixelNm: scene.afmPixelNm, channels: scene.channels, flPixelNm: scene.flPixelNm,
      numericalAperture: scene.numericalAperture, fiducialPairs: scene.beadsAfm.map((p, i) => ({ afm: p, fl: scene.beadsFl[i] })),
    };
    k3 = analyzeField(input);
    k5 = analyzeField(input, { positivityKByMarker: { CD63: 5 } });
  }, 120_000);

  it('uses null centre + 5 null SDs of the same empty places for the marker given k = 5, and 3.09 for the others', () => {
    const a = k3.summary.channels.CD63;
    const b = k5.summary.channels.CD63;
    expect(b.thresholdSource).toBe('camera_noise');
    expect(b.zCritical).toBe(5);
    // same places, same amplitudes: only k differs
    expect(b.backgroundMeanCounts).toBe(a.backgroundMeanCounts);
    expect(b.backgroundSdCounts).toBe(a.backgroundSdCounts);
    expect(b.backgroundSdCounts!).toBeGreaterThan(0);
    expect(b.thresholdCounts).toBeCloseTo(b.backgroundMeanCounts! + 5 * b.backgroundSdCounts!, 9);
    expect(b.thresholdCounts - a.thresholdCounts).toBeCloseTo((5 - a.zCritical!) * a.backgroundSdCounts!, 9);
    for (const m of ['CD9', 'CD81']) expect(k5.summary.channels[m].thresholdCounts).toBe(k3.summary.channels[m].thresholdCounts);
  });

  it('calls CD63 against the higher z_crit: positives are exactly the calibrated z above 5', () => {
    const above = k5.records.filter((r) => (r.markers.CD63?.zCalibrated ?? -Infinity) > 5).length;
    expect(k5.summary.positiveByMarker.CD63).toBe(above);
    expect(k5.records.filter((r) => r.markers.CD63?.positive).length).toBe(above);
    expect(k5.summary.positiveByMarker.CD63).toBeLessThanOrEqual(k3.summary.positiveByMarker.CD63);
    expect(k5.summary.positiveByMarker.CD9).toBe(k3.summary.positiveByMarker.CD9);
  });

  it('refuses a k that is not a positive number', () => {
    expect(() => analyzeField(input, { positivityKByMarker: { CD63: 0 } })).toThrow(RangeError);
    expect(() => analyzeField(input, { positivityKByMarker: { CD63: Number.NaN } })).toThrow(RangeError);
  });
});
