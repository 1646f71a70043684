import { describe, it, expect } from 'vitest';
import { DetectionSettings, DetectionSettingsRequest, defaultDetectionSettings, detectionOptions } from '../detectionSettings';
import { analyzeHeightMap } from '../../analysis/heightmap';
import { makeHeightScene } from '../../analysis/synthetic';

const base: DetectionSettings = { threshold: { method: 'robust', k: 3 }, minHeightNm: 2, minAreaNm2: 1521, beadMinHeightNm: 300, levellingOrder: 1 };

describe('detection settings → analysis options', () => {
  it('null keeps the options ingestion always used (tip radius only)', () => {
    expect(detectionOptions(null, 13, 8)).toEqual({ measure: { tipRadiusNm: 8 } });
  });

  it('converts the minimum area from nm² to px with the pixel size (area_px = area_nm² / pixel_nm², geometry)', () => {
    // 9 px at 13 nm/px is 9 × 169 = 1521 nm²; 100 nm² at 5 nm/px is 4 px; 50 nm² at 4 nm/px is 3.125 px
    expect(detectionOptions(base, 13, 0).detect!.minAreaPx).toBe(9);
    expect(detectionOptions({ ...base, minAreaNm2: 100 }, 5, 0).detect!.minAreaPx).toBe(4);
    expect(detectionOptions({ ...base, minAreaNm2: 50 }, 4, 0).detect!.minAreaPx).toBe(3.125);
    expect(defaultDetectionSettings(13).minAreaNm2).toBe(1521);
  });

  it('maps each threshold method, the bead cut-off, the minimum height and the levelling order', () => {
    const o = detectionOptions({ threshold: { method: 'manual', thresholdNm: 4.5 }, minHeightNm: 3, minAreaNm2: 0, beadMinHeightNm: 150, levellingOrder: 2 }, 10, 8);
    expect(o).toEqual({
      level: { surface: 'poly2' }, threshold: { method: 'manual', thresholdNm: 4.5 },
      detect: { minHeightNm: 3, minAreaPx: 0, beadMinHeightNm: 150 }, measure: { tipRadiusNm: 8 },
    });
    expect(detectionOptions({ ...base, threshold: { method: 'robust', k: 5 } }, 10, 0).threshold).toEqual({ method: 'robust', k: 5 });
    expect(detectionOptions({ ...base, threshold: { method: 'otsu' } }, 10, 0).threshold).toEqual({ method: 'otsu' });
    expect(detectionOptions(base, 10, 0).level).toEqual({ surface: 'plane' });
    expect(() => detectionOptions(base, 0, 0)).toThrow(RangeError);
  });

  // one synthetic scene: 12 vesicles 8–30 nm high and 3 beads 200 nm high (5 nm/px)
  const scene = makeHeightScene({ seed: 7, width: 256, height: 256, pixelSizeNm: 5, nbVesicles: 12, nbBeads: 3, beadHeightNm: 200 });
  const run = (s: DetectionSettings | null) => analyzeHeightMap(scene.raster, 5, detectionOptions(s, 5, 0));

  it('the default settings reproduce the result without settings exactly', () => {
    const a = run(null);
    const b = run(defaultDetectionSettings(5));
    expect(b.threshold.thresholdNm).toBe(a.threshold.thresholdNm);
    expect(b.vesicles.map((v) => v.centroidPx)).toEqual(a.vesicles.map((v) => v.centroidPx));
    expect(b.fiducialCandidates.length).toBe(a.fiducialCandidates.length);
  });

  it('a 150 nm bead cut-off makes 200 nm beads fiducial candidates; the 300 nm default counts them as vesicles', () => {
    const byDefault = run(null);
    expect(byDefault.fiducialCandidates).toHaveLength(0);
    const cut = run({ ...defaultDetectionSettings(5), beadMinHeightNm: 150 });
    expect(cut.fiducialCandidates).toHaveLength(3);
    expect(cut.vesicles.length).toBe(byDefault.vesicles.length - 3);
    for (const f of cut.fiducialCandidates) expect(f.maxHeightNm).toBeGreaterThan(150);
  });
});

describe('detection settings validation', () => {
  const bad: [string, unknown][] = [
    ['k below 1', { ...base, threshold: { method: 'robust', k: 0.5 } }],
    ['k above 10', { ...base, threshold: { method: 'robust', k: 11 } }],
    ['manual threshold of 0 nm', { ...base, threshold: { method: 'manual', thresholdNm: 0 } }],
    ['manual without a threshold', { ...base, threshold: { method: 'manual' } }],
    ['unknown method', { ...base, threshold: { method: 'mean' } }],
    ['negative area', { ...base, minAreaNm2: -1 }],
    ['bead cut-off of 0 nm', { ...base, beadMinHeightNm: 0 }],
    ['levelling order 3', { ...base, levellingOrder: 3 }],
    ['a key the analysis does not know', { ...base, minAreaPx: 9 }],
    ['a string for a number', { ...base, minHeightNm: '2' }],
  ];
  it.each(bad)('refuses %s', (_, value) => {
    expect(DetectionSettings.safeParse(value).success).toBe(false);
  });
  it('accepts the defaults and null in a request', () => {
    expect(DetectionSettings.parse(defaultDetectionSettings(13))).toEqual(defaultDetectionSettings(13));
    expect(DetectionSettingsRequest.safeParse({ settings: null, expectedVersion: 3 }).success).toBe(true);
    expect(DetectionSettingsRequest.safeParse({ settings: base }).success).toBe(false);
  });
});
