import { describe, it, expect } from 'vitest';
import { makeHeightScene } from '../../analysis/synthetic';
import { detectionLists, fieldHeightMap, reviewedDetectionMismatch } from '../fieldHeightMap';
import type { FieldDetection } from '../detectionTypes';

// a generated height map: spherical caps 8–30 nm high and four 200 nm beads (below the 300 nm default bead cut-off)
const scene = makeHeightScene({
  seed: 31, width: 256, height: 256, pixelSizeNm: 13, nbVesicles: 30, nbBeads: 4, beadHeightNm: 200,
  baseRadiusRangeNm: [35, 80], heightRangeNm: [8, 30], minGapPx: 6, marginPx: 8,
});
const field = (detectionSettings: unknown) => ({ detectionSettings, afmPixelNm: 13, tipRadiusNm: 8 });
const manual15 = { threshold: { method: 'manual', thresholdNm: 15 }, minHeightNm: 2, minAreaNm2: 9 * 169, beadMinHeightNm: 150, levellingOrder: 1 };

/** detection.json as ingestion writes it, through a JSON round trip as storage does. */
function stored(f: ReturnType<typeof field>): FieldDetection {
  const { afm, settingsUsed } = fieldHeightMap(f, scene.raster);
  const d: FieldDetection = {
    afmPixelNm: 13, flPixelNm: 65, settings: settingsUsed, thresholdNm: afm.threshold.thresholdNm, backgroundSigmaNm: afm.levelling.backgroundSigmaNm,
    ...detectionLists(afm), spots: [],
  };
  return JSON.parse(JSON.stringify(d));
}

describe('fieldHeightMap and the reviewed detection', () => {
  it('detects again exactly what was stored for review, with the analyst\'s settings', () => {
    const reviewed = stored(field(manual15));
    const { afm, settingsUsed } = fieldHeightMap(field(manual15), scene.raster);
    expect(reviewedDetectionMismatch(reviewed, afm, settingsUsed)).toBeNull();
    // the analyst's 150 nm cut-off makes the four 200 nm beads fiducial candidates (generator truth)
    expect(afm.fiducialCandidates).toHaveLength(4);
    expect(settingsUsed).toMatchObject({ source: 'analyst', minAreaPx: 9 });
  });

  it('names what differs: other settings, a missing vesicle, a moved one', () => {
    const reviewed = stored(field(manual15));
    const defaults = fieldHeightMap(field(null), scene.raster);
    expect(reviewedDetectionMismatch(reviewed, defaults.afm, defaults.settingsUsed)).toMatch(/detection settings were changed/);
    // the defaults count the beads and the low caps as vesicles: another set
    expect(defaults.afm.vesicles.length).toBeGreaterThan(reviewed.vesicles.length);

    const { afm, settingsUsed } = fieldHeightMap(field(manual15), scene.raster);
    const fewer = { ...reviewed, vesicles: reviewed.vesicles.slice(1) };
    expect(reviewedDetectionMismatch(fewer, afm, settingsUsed)).toBe(`${afm.vesicles.length} vesicles were found where ${afm.vesicles.length - 1} were shown for review`);
    const moved = { ...reviewed, vesicles: reviewed.vesicles.map((v, i) => (i === 2 ? { ...v, x: v.x + 0.5 } : v)) };
    expect(reviewedDetectionMismatch(moved, afm, settingsUsed)).toBe('vesicle 3 lies 0.50 px from where it was shown for review');
  });

  it('refuses saved settings that no longer validate, with what to do', () => {
    expect(() => fieldHeightMap(field({ ...manual15, threshold: { method: 'manual', thresholdNm: -1 } }), scene.raster)).toThrow(/save them again on the field page/);
  });
});
