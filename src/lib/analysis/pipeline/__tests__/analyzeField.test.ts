import { beforeAll, describe, expect, it } from 'vitest';
import { AnalysisError } from '../../errors';
import { applyAffine, evaluateRegistration } from '../../geometry';
import type { Point } from '../../types';
import { analyzeField, fieldStages, vesicleCsvTable, type AnalyzeFieldInput, type AnalyzeFieldResult, type FieldStage } from '..';
import { makeFieldScene, type FieldScene } from './fieldScene';

/** Greedy one-to-one matching of detected to true positions within maxPx (closest pairs first). */
function matchPoints(detected: readonly Point[], truth: readonly Point[], maxPx: number): Map<number, number> {
  const candidates: [number, number, number][] = [];
  detected.forEach((d, i) => truth.forEach((t, j) => {
    const dist = Math.hypot(d.x - t.x, d.y - t.y);
    if (dist <= maxPx) candidates.push([dist, i, j]);
  }));
  candidates.sort((a, b) => a[0] - b[0]);
  const byDetected = new Map<number, number>();
  const usedTruth = new Set<number>();
  for (const [, i, j] of candidates) {
    if (byDetected.has(i) || usedTruth.has(j)) continue;
    byDetected.set(i, j);
    usedTruth.add(j);
  }
  return byDetected;
}

function inputOf(scene: FieldScene, withPicks: boolean): AnalyzeFieldInput {
  return {
    heightNm: scene.afm.raster,
    afmPixelNm: scene.afmPixelNm,
    channels: scene.channels,
    flPixelNm: scene.flPixelNm,
    numericalAperture: scene.numericalAperture,
    // picks a few pixels off the bead centres, as a person clicking would place them
    fiducialPairs: withPicks
      ? scene.beadsAfm.map((p, i) => ({ afm: { x: p.x + 3, y: p.y - 2 }, fl: { x: scene.beadsFl[i].x + 0.7, y: scene.beadsFl[i].y - 0.5 } }))
      : undefined,
  };
}

/** Largest distance between the recovered and the true map over the AFM field's corners and centre (fluorescence px). */
function transformErrorPx(scene: FieldScene, result: AnalyzeFieldResult): number {
  const n = scene.afm.raster.width - 1;
  const probes = [{ x: 0, y: 0 }, { x: n, y: 0 }, { x: 0, y: n }, { x: n, y: n }, { x: n / 2, y: n / 2 }];
  return Math.max(...probes.map((p) => {
    const a = applyAffine(result.summary.registration.flFromAfm, p);
    const b = applyAffine(scene.flFromAfm, p);
    return Math.hypot(a.x - b.x, a.y - b.y);
  }));
}

describe('analyzeField on a synthetic field with known truth', () => {
  let scene: FieldScene;
  let picked: AnalyzeFieldResult;
  let automatic: AnalyzeFieldResult;
  let matches: Map<number, number>;
  const progress: [FieldStage, number][] = [];

  beforeAll(() => {
    scene = makeFieldScene();
    picked = analyzeField(inputOf(scene, true), { onProgress: (s, f) => progress.push([s, f]) });
    automatic = analyzeField(inputOf(scene, false));
    matches = matchPoints(picked.vesicles.map((v) => v.centroidPx), scene.vesicles.map((v) => v.afm), 3);
  }, 120_000);

  it('the scene has what the checks need: out-of-frame vesicles, mirrored map, labelled spots ≥ 300 photons', () => {
    const out = scene.vesicles.filter((v) => !v.inFrame).length;
    expect(out).toBeGreaterThanOrEqual(3);
    expect(out).toBeLessThan(scene.vesicles.length / 2);
    const [a, b, , d, e] = scene.flFromAfm;
    expect(a * e - b * d).toBeLessThan(0);
  });

  it('finds ≥ 95 % of the vesicles with ≥ 95 % precision, and the beads as fiducial candidates', () => {
    // 3 AFM px = 30 nm: well under the smallest vesicle radius (30 nm) plus the 12 px gaps between features
    const recall = matches.size / scene.vesicles.length;
    const precision = matches.size / picked.vesicles.length;
    expect(recall).toBeGreaterThanOrEqual(0.95);
    expect(precision).toBeGreaterThanOrEqual(0.95);
    const beadMatches = matchPoints(picked.fiducialCandidates.map((f) => f.centroidPx), scene.beadsAfm, 2);
    expect(beadMatches.size).toBe(scene.beadsAfm.length);
    expect(picked.summary.nbFiducialCandidates).toBe(scene.beadsAfm.length);
  });

  it('refines each fiducial pick to the bead under it and reports how far it moved', () => {
    const refinement = picked.summary.registration.refinement!;
    expect(refinement).toHaveLength(scene.beadsAfm.length);
    for (const r of refinement) {
      expect(r.afmSnapped && r.flSnapped).toBe(true);
      // picks were off by (3, −2) AFM px = 3.61 px and (0.7, −0.5) fl px = 0.86 px; the bead centroid and the
      // Gaussian fit of a 4000-photon spot are good to ~0.2 px (noise), so allow 0.3 px
      expect(Math.abs(r.afmMovedPx - Math.hypot(3, 2))).toBeLessThan(0.3);
      expect(Math.abs(r.flMovedPx - Math.hypot(0.7, 0.5))).toBeLessThan(0.3);
      expect(r.afmMovedNm).toBeCloseTo(r.afmMovedPx * 10, 9);
      expect(r.flMovedNm).toBeCloseTo(r.flMovedPx * 65, 9);
    }
  });

  it('recovers the mirrored transform from refined picks and from automatic pairing', () => {
    for (const result of [picked, automatic]) {
      const reg = result.summary.registration;
      expect(reg.mirrored).toBe(true);
      // 0.3 fl px ≈ 20 nm, a tenth of the diffraction limit (docs/references.md §4, Abbe 186 nm at 520 nm, NA 1.4)
      expect(transformErrorPx(scene, result)).toBeLessThan(0.3);
    }
    expect(picked.summary.registration.source).toBe('fiducials');
    expect(picked.summary.registration.nbPairs).toBe(5);
    // beads localise to a few nm, so the refined picks fit to well under a fluorescence pixel
    expect(picked.summary.registration.freNm).toBeLessThan(10);
    expect(automatic.summary.registration.source).toBe('automatic');
    expect(automatic.summary.registration.refinement).toBeNull();
    expect(automatic.summary.registration.nbPairs).toBeGreaterThanOrEqual(10);
    expect(automatic.summary.registration.freNm).toBeLessThan(65);
  });

  it('calls ≥ 95 % of markers right (spots of 300–1500 photons over 100 photons/px)', () => {
    for (const result of [picked, automatic]) {
      const vesicleMatches = matchPoints(result.vesicles.map((v) => v.centroidPx), scene.vesicles.map((v) => v.afm), 3);
      let right = 0;
      let total = 0;
      let labelled = 0;
      let labelledFound = 0;
      for (const [i, j] of vesicleMatches) {
        const truth = scene.vesicles[j];
        if (!truth.inFrame) continue;
        for (const m of result.summary.markers) {
          const call = result.records[i].markers[m].positive;
          const isLabelled = truth.photons[m] > 0;
          total++;
          if (call === isLabelled) right++;
          if (isLabelled) {
            labelled++;
            if (call) labelledFound++;
          }
        }
      }
      expect(total).toBeGreaterThan(60);
      expect(right / total).toBeGreaterThanOrEqual(0.95);
      expect(labelledFound / labelled).toBeGreaterThanOrEqual(0.95);
    }
  });

  it('calls each marker above camera noise: calibrated z > 2.58 (one-sided p < 0.005), null from empty places', () => {
    // the joint amplitude is what is tested, in SEs of the camera noise model; the null is the median/MAD of z at
    // empty places (docs/references.md §4 for the SE, §7 for BH q)
    for (const m of picked.summary.markers) {
      const c = picked.summary.channels[m];
      expect(c.thresholdSource).toBe('camera_noise');
      expect(c.rule).toBe('camera_noise');
      expect(c.ruleSentence).toMatch(/^Positive: detected above camera noise/);
      expect(c.zCritical).toBe(2.58);
      expect(c.nullCalibrated).toBe(true);
      // z at empty places of a Poisson frame follows N(0, 1) when the model is right: median ≈ 0, MAD ≈ 1; places next
      // to spots are fitted with them, conditional on the ones NNLS clips, which shifts the median a little (the
      // calibration takes it out, for vesicles and places alike)
      expect(Math.abs(c.nullMedianZ!)).toBeLessThan(0.4);
      expect(c.nullMadZ!).toBeGreaterThan(0.8);
      expect(c.nullMadZ!).toBeLessThan(1.25);
      expect(c.thresholdMeasure).toBe('joint_amplitude');
      expect(c.thresholdUnit).toMatch(/^counts/);
      expect(c.thresholdCounts).toBeCloseTo(c.backgroundMeanCounts! + c.zCritical! * c.backgroundSdCounts!, 9);
      // every call is the calibrated z against z_crit, with p from it and z = amplitude / SE
      for (const r of picked.records) {
        const call = r.markers[m];
        if (call.positive === null) continue;
        expect(call.z!).toBeCloseTo(call.amplitudeCounts! / call.amplitudeSeCounts!, 9);
        expect(call.zCalibrated!).toBeCloseTo((call.z! - c.nullMedianZ!) / c.nullMadZ!, 9);
        expect(call.positive).toBe(call.zCalibrated! > c.zCritical!);
        expect(call.qValue!).toBeGreaterThanOrEqual(call.pValue!);
      }
      expect(c.nbMeasured).toBe(picked.records.filter((r) => r.markers[m].positive !== null).length);
      expect(c.positiveFraction).toBeCloseTo(c.nbPositive / c.nbMeasured!, 12);
      // chance colocalisation: shifted positions rarely land on a spot in this sparse scene
      expect(c.nbChancePositions).toBe(5 * c.nbMeasured!);
      expect(c.chancePositiveFraction!).toBeLessThan(0.5 * c.positiveFraction!);
      // PSF σ = 0.21·λ/NA/pixel (docs/references.md §4, Zhang et al. 2007): 520 nm, NA 1.4, 65 nm/px → 1.2 px
      if (m === 'CD9') expect(c.psfSigmaPx).toBeCloseTo(1.2, 9);
      // the five beads shine in every channel and are not counted as vesicle-free spots
      expect(c.nbSpotsOnFiducials).toBe(5);
    }
  });

  it('flags vesicles that map outside the fluorescence frame and leaves their calls empty', () => {
    let checked = 0;
    for (const [i, j] of matches) {
      const truth = scene.vesicles[j];
      // half a pixel from the edge either way the recovered map may put it on the other side
      const margin = Math.min(truth.fl.x + 0.5, truth.fl.y + 0.5, scene.channels[0].raster.width - 0.5 - truth.fl.x);
      if (Math.abs(margin) < 0.5) continue;
      const record = picked.records[i];
      expect(record.outOfFrame).toBe(!truth.inFrame);
      if (!truth.inFrame) {
        checked++;
        expect(record.phenotype).toBe('CD9? CD63? CD81?');
        expect(record.markers.CD9.positive).toBeNull();
        expect(record.markers.CD9.intensityCounts).toBeNull();
      }
    }
    expect(checked).toBeGreaterThanOrEqual(3);
    expect(picked.summary.nbOutOfFrame).toBe(picked.records.filter((r) => r.outOfFrame).length);
  });

  it('summary counts agree with the records', () => {
    const { summary, records } = picked;
    expect(summary.nbVesicles).toBe(records.length);
    for (const m of summary.markers) {
      expect(summary.positiveByMarker[m]).toBe(records.filter((r) => r.markers[m].positive === true).length);
    }
    // phenotypes only over vesicles measured in every channel
    expect(Object.values(summary.phenotypeCounts).reduce((s, n) => s + n, 0)).toBe(records.filter((r) => !r.outOfFrame).length);
    expect(summary.nbMeasuredAllChannels).toBe(records.filter((r) => !r.outOfFrame).length);
    expect(Object.keys(summary.phenotypeCounts).some((p) => p.includes('?'))).toBe(false);
    for (const m of summary.markers) expect(summary.nbMeasuredByMarker![m]).toBe(records.filter((r) => r.markers[m].positive !== null).length);
    expect(summary.nbVesiclesWithoutMarker).toBe(records.filter((r) => !r.outOfFrame && r.phenotype === 'CD9- CD63- CD81-').length);
    // every spot here comes from a vesicle or a bead
    expect(Object.values(summary.spotsWithoutVesicleByMarker).reduce((s, n) => s + n, 0)).toBeLessThanOrEqual(1);
  });

  it('reports progress for every stage in order, from 0 to 1', () => {
    const starts = progress.filter(([, f]) => f === 0).map(([s]) => s);
    const ends = progress.filter(([, f]) => f === 1).map(([s]) => s);
    expect(starts).toEqual(fieldStages);
    expect(ends).toEqual(fieldStages);
    for (const [, f] of progress) expect(f >= 0 && f <= 1).toBe(true);
  });

  it('gives byte-identical output when run twice and leaves its inputs untouched', () => {
    const input = inputOf(scene, true);
    const before = [input.heightNm.data.slice(), ...input.channels.map((c) => c.raster.data.slice())];
    const again = analyzeField(input);
    expect(vesicleCsvTable(again.records, again.summary.markers)).toEqual(vesicleCsvTable(picked.records, picked.summary.markers));
    expect(JSON.stringify(again.summary)).toBe(JSON.stringify(picked.summary));
    expect(input.heightNm.data).toEqual(before[0]);
    input.channels.forEach((c, i) => expect(c.raster.data).toEqual(before[i + 1]));
  });

  it('uses given thresholds instead of empty apertures', () => {
    const result = analyzeField({ ...inputOf(scene, true), thresholdCountsByMarker: { CD63: 1e9 } });
    expect(result.summary.channels.CD63.thresholdSource).toBe('given');
    expect(result.summary.channels.CD63.thresholdCounts).toBe(1e9);
    expect(result.summary.positiveByMarker.CD63).toBe(0);
    expect(result.summary.positiveByMarker.CD9).toBe(picked.summary.positiveByMarker.CD9);
  });

  it('refuses collinear or too few fiducial pairs with the registration error codes', () => {
    const line = [0, 1, 2].map((k) => ({ afm: { x: 100 + 100 * k, y: 100 + 100 * k }, fl: { x: 20 + 15 * k, y: 20 + 15 * k } }));
    const code = (f: () => unknown) => {
      try {
        f();
      } catch (e) {
        return e instanceof AnalysisError ? e.code : String(e);
      }
      return 'no error';
    };
    // snapRadiusNm 0 keeps the picks as given, so refinement cannot move them off the line
    const noSnap = { snapRadiusNm: 0 };
    expect(code(() => analyzeField({ ...inputOf(scene, false), fiducialPairs: line }, noSnap))).toBe('degenerate_fiducials');
    expect(code(() => analyzeField({ ...inputOf(scene, false), fiducialPairs: line.slice(0, 2) }, noSnap))).toBe('too_few_fiducials');
  });

  it('refuses inconsistent channels and thresholds before any work', () => {
    const input = inputOf(scene, true);
    const small = { data: new Float32Array(16), width: 4, height: 4 };
    const cases: [Partial<AnalyzeFieldInput>, string][] = [
      [{ channels: [] }, 'no_channels'],
      [{ channels: [input.channels[0], input.channels[0]] }, 'duplicate_marker'],
      [{ channels: [input.channels[0], { ...input.channels[1], raster: small }] }, 'channel_size_mismatch'],
      [{ thresholdCountsByMarker: { CD4: 10 } }, 'unknown_marker_threshold'],
    ];
    for (const [patch, expected] of cases) {
      expect(() => analyzeField({ ...input, ...patch })).toThrow(expect.objectContaining({ code: expected }));
    }
    expect(() => analyzeField({ ...input, flPixelNm: 0 })).toThrow(RangeError);
  });

  it('maps vesicles with a saved similarity exactly as saved, without refining or refitting its pairs', () => {
    // The scene's true map has a 2 % shear, which a similarity cannot fit. An analyst saved a similarity fitted to
    // the true bead positions; linking must use that transform (and say so), not an affine refit of the pairs.
    const pairs = scene.beadsAfm.map((p, i) => ({ afm: p, fl: scene.beadsFl[i] }));
    const similarity = evaluateRegistration(pairs, { afmPixelNm: scene.afmPixelNm, flPixelNm: scene.flPixelNm, model: 'similarity' });
    const affine = evaluateRegistration(pairs, { afmPixelNm: scene.afmPixelNm, flPixelNm: scene.flPixelNm, model: 'affine' });
    const saved = analyzeField({ ...inputOf(scene, true), savedRegistration: { flFromAfm: similarity.flFromAfm, model: 'similarity', pairs } });
    const reg = saved.summary.registration;
    expect(reg.source).toBe('saved');
    expect(reg.model).toBe('similarity');
    expect(reg.refinement).toBeNull();
    expect([...reg.flFromAfm]).toEqual([...similarity.flFromAfm]);
    // FRE against the saved transform equals the similarity fit's own FRE (same pairs, same map)
    expect(reg.freNm).toBeCloseTo(similarity.freNm, 9);
    let maxDiffFromAffine = 0;
    saved.records.forEach((r, i) => {
      const want = applyAffine(similarity.flFromAfm, saved.vesicles[i].centroidPx);
      expect(r.xFlPx).toBeCloseTo(want.x, 9);
      expect(r.yFlPx).toBeCloseTo(want.y, 9);
      const other = applyAffine(affine.flFromAfm, saved.vesicles[i].centroidPx);
      maxDiffFromAffine = Math.max(maxDiffFromAffine, Math.hypot(other.x - want.x, other.y - want.y));
    });
    // the two models place vesicles measurably apart here (2 % shear over a ~80 px frame ≈ 0.5 px at the edges),
    // so the check above tells them apart
    expect(maxDiffFromAffine).toBeGreaterThan(0.2);
    expect(() => analyzeField({ ...inputOf(scene, true), savedRegistration: { flFromAfm: [1, 0, 0, 0, 1, Number.NaN], model: 'affine', pairs } }))
      .toThrow(expect.objectContaining({ code: 'invalid_saved_transform' }));
  });
});
