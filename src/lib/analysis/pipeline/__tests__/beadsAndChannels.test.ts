import { beforeAll, describe, expect, it } from 'vitest';
import { analyzeField, type AnalyzeFieldResult } from '..';
import { makeCorrelativeScene, type CorrelativeScene } from '../../synthetic';
import { classifyBeads } from '../classifyBeads';
import { subtractBeadImages } from '../subtractBeadImages';
import { fitBeadSpots } from '../../geometry/fitBeadSpots';
import { createRng } from '../../synthetic/random';
import { renderCorrelativeChannel } from '../../synthetic/renderCorrelativeChannel';
import type { MeasureVesicleResult } from '../../heightmap/types';

const nearest = (scene: CorrelativeScene, x: number, y: number) => {
  let best = { kind: 'none', d: Infinity, index: -1 };
  for (const [kind, list] of [['vesicle', scene.vesicles], ['bead', scene.beads]] as const) {
    for (const o of list) {
      const d = Math.hypot(o.afmPx.x - x, o.afmPx.y - y);
      if (d < best.d) best = { kind, d, index: o.index };
    }
  }
  return best;
};

describe('analyzeField on a correlative scene with 100–200 nm beads and a 70 nm/channel chromatic shift', () => {
  let scene: CorrelativeScene;
  let result: AnalyzeFieldResult;
  beforeAll(() => {
    scene = makeCorrelativeScene({ seed: 21, chromaticShiftNmPerChannel: 70 });
    result = analyzeField({ ...scene, fiducialPairs: scene.fiducialPicks }, { tipRadiusNm: 8, cameraOffsetCounts: 100 });
  }, 120_000);

  it('lists every bead of the AFM field apart and releases none of them as a vesicle', () => {
    const inField = scene.beads.filter((b) => b.inAfmField);
    expect(result.beads.length).toBe(inField.length);
    for (const b of result.beads) expect(nearest(scene, b.xAfmPx, b.yAfmPx).kind).toBe('bead');
    for (const r of result.records) expect(nearest(scene, r.xAfmPx, r.yAfmPx).kind).toBe('vesicle');
    // 100–200 nm beads are taller than the field's fence; picked ones also carry the pick as a reason
    for (const b of result.beads) expect(b.reasons).toContain('height');
    expect(result.beads.filter((b) => b.reasons.includes('fiducial_pick')).length).toBe(scene.fiducialPicks.length);
    expect(result.summary.nbVesicles).toBe(result.records.length);
    expect(result.summary.registration.warnings.filter((w) => w.code === 'fiducial_on_vesicle')).toEqual([]);
  });

  it('maps each channel through its own transform, within 15 nm RMS of the truth', () => {
    // truth: makeCorrelativeScene's per-channel flFromAfm; 15 nm = 0.23 px, far below the 140 nm shift of the reddest channel
    for (const c of scene.channels) {
      const reg = result.summary.registration.channels[c.marker];
      expect(reg.source).toBe('beads');
      expect(reg.nbBeads).toBeGreaterThanOrEqual(3);
      let worst = 0;
      let sum2 = 0;
      const inField = scene.vesicles.filter((o) => o.inAfmField);
      for (const v of inField) {
        const t = reg.flFromAfm;
        const p = { x: t[0] * v.afmPx.x + t[1] * v.afmPx.y + t[2], y: t[3] * v.afmPx.x + t[4] * v.afmPx.y + t[5] };
        const q = v.flPxByMarker[c.marker];
        const dNm = Math.hypot(p.x - q.x, p.y - q.y) * scene.flPixelNm;
        worst = Math.max(worst, dNm);
        sum2 += dNm * dNm;
      }
      // picks carry 30 nm of jitter: the common affine is good to ~10 nm RMS, worse at the field's corners
      expect(Math.sqrt(sum2 / inField.length)).toBeLessThan(15);
      expect(worst).toBeLessThan(40);
      // the PSF width measured on the beads lies between the optics' prediction and the rendered (15 % wider) Airy's
      expect(reg.psfSigmaPx!).toBeGreaterThan(c.modelPsfSigmaPx);
      expect(reg.psfSigmaPx!).toBeLessThan(1.05 * c.renderedPsfSigmaPx);
    }
  });

  it('treats the object under a pick as a bead, and says so when it looks like a vesicle', { timeout: 120_000 }, () => {
    const v = scene.vesicles.find((o) => o.inAfmField && o.inFrameByMarker.CD9 && o.heightNm > 15)!;
    const picks = [...scene.fiducialPicks, { afm: v.afmPx, fl: v.flPxByMarker.CD9 }];
    const r = analyzeField({ ...scene, fiducialPairs: picks }, { tipRadiusNm: 8, cameraOffsetCounts: 100 });
    const onVesicle = r.beads.find((b) => Math.hypot(b.xAfmPx - v.afmPx.x, b.yAfmPx - v.afmPx.y) < 2)!;
    expect(onVesicle.reasons).toEqual(['fiducial_pick']);
    expect(r.records.some((rec) => Math.hypot(rec.xAfmPx - v.afmPx.x, rec.yAfmPx - v.afmPx.y) < 2)).toBe(false);
    expect(r.records.length).toBe(result.records.length - 1);
    const notes = r.summary.registration.warnings.filter((w) => w.code === 'fiducial_on_vesicle');
    expect(notes).toHaveLength(1);
    expect(notes[0].message).toContain(`Fiducial pair ${picks.length} sits on an object`);
  });

  it('refines a saved registration per channel from the beads at link time', { timeout: 120_000 }, () => {
    const saved = { flFromAfm: result.summary.registration.flFromAfm, model: result.summary.registration.model, pairs: result.summary.registration.pairs };
    const r = analyzeField({ ...scene, savedRegistration: saved }, { tipRadiusNm: 8, cameraOffsetCounts: 100 });
    expect(r.summary.registration.source).toBe('saved');
    for (const c of scene.channels) {
      const a = r.summary.registration.channels[c.marker].offsetFlPx;
      const b = result.summary.registration.channels[c.marker].offsetFlPx;
      expect(a.x).toBeCloseTo(b.x, 6);
      expect(a.y).toBeCloseTo(b.y, 6);
    }
    expect(r.beads.length).toBe(result.beads.length);
  });
});

describe('beads among tall vesicles (EVs imaged in liquid, up to ~80 nm high)', () => {
  it('still finds 100–120 nm beads, by height or by light in every channel, and keeps every vesicle', { timeout: 120_000 }, () => {
    // EV heights in liquid ≈ 20–80 nm (docs/references.md §9): base radius 45–90 nm, contact angle 50–85° → 21–82 nm
    const scene = makeCorrelativeScene({
      seed: 31, baseRadiusRangeNm: [45, 90], contactAngleRangeDeg: [50, 85], beadDiameterRangeNm: [100, 120], nbVesicles: 50,
    });
    const r = analyzeField({ ...scene }, { tipRadiusNm: 8, cameraOffsetCounts: 100 });
    expect(Math.max(...scene.vesicles.map((v) => v.heightNm))).toBeGreaterThan(70);
    expect(r.beads.length).toBe(scene.beads.filter((b) => b.inAfmField).length);
    for (const b of r.beads) expect(nearest(scene, b.xAfmPx, b.yAfmPx).kind).toBe('bead');
    for (const rec of r.records) expect(nearest(scene, rec.xAfmPx, rec.yAfmPx).kind).toBe('vesicle');
    expect(r.records.length).toBe(scene.vesicles.filter((v) => v.inAfmField).length);
  });
});

describe('no beads in the field', () => {
  it('turns no vesicle into a bead, even tall triple-positive ones among mostly dark vesicles', { timeout: 120_000 }, () => {
    // 80 % unlabelled, the rest carry every marker (300–2000 photons each); tall EVs (liquid); no bead anywhere
    const scene = makeCorrelativeScene({
      seed: 41, nbBeads: 0, nbBeadsOutsideAfm: 0, unlabelledFraction: 0.8, baseRadiusRangeNm: [45, 90], contactAngleRangeDeg: [50, 85],
      markers: [{ marker: 'CD9', emissionNm: 520, positiveFraction: 1 }, { marker: 'CD63', emissionNm: 590, positiveFraction: 1 }, { marker: 'CD81', emissionNm: 670, positiveFraction: 1 }],
    });
    const r = analyzeField({ ...scene }, { tipRadiusNm: 8, cameraOffsetCounts: 100 });
    expect(scene.vesicles.filter((v) => v.inAfmField && v.labels.CD9 && v.heightNm > 60).length).toBeGreaterThanOrEqual(2);
    expect(r.beads).toEqual([]);
    expect(r.records.length).toBe(scene.vesicles.filter((v) => v.inAfmField).length);
    expect(r.summary.registration.warnings.filter((w) => w.code === 'channel_common_transform')).toHaveLength(3);
  });
});

describe('classifyBeads', () => {
  const object = (label: number, apexHeightNm: number, x = label * 10): MeasureVesicleResult =>
    ({ label, apexHeightNm, centroidPx: { x, y: 5 }, circularity: 0.9 }) as MeasureVesicleResult;

  it('puts the fence at Q3 + 3·IQR of the heights (quantile type 7), never below 50 nm', () => {
    // heights 10, 12, …, 30 (11 values) and one 150 nm bead: R quantile(type = 7) gives Q1 = 15.5, Q3 = 26.5
    // (R documentation of quantile, type 7 = linear interpolation of the order statistics), fence 26.5 + 3·11 = 59.5.
    const objects = [...Array.from({ length: 11 }, (_, i) => object(i + 1, 10 + 2 * i)), object(12, 150)];
    const labels = new Int32Array(200 * 10);
    const r = classifyBeads(objects, [], { labels, width: 200, afmPixelNm: 10 });
    expect(r.heightFenceNm).toBeCloseTo(59.5, 10);
    expect(r.innerFenceNm).toBeCloseTo(26.5 + 1.5 * 11, 10);
    expect(r.beads.map((b) => b.object.label)).toEqual([12]);
    expect(r.vesicles).toHaveLength(11);
    // flat, uniform heights: the fence would sit at 20 nm; the 50 nm floor keeps 40 nm vesicles
    const flat = [...Array.from({ length: 10 }, (_, i) => object(i + 1, 20)), object(11, 40)];
    const f = classifyBeads(flat, [], { labels, width: 200, afmPixelNm: 10 });
    expect(f.heightFenceNm).toBe(50);
    expect(f.beads).toEqual([]);
  });

  it('takes the object under a pick, or the nearest within the pick radius, and reports picks on nothing', () => {
    const objects = [object(1, 20, 50), object(2, 22, 120)];
    const labels = new Int32Array(200 * 10);
    labels[5 * 200 + 50] = 1;
    const r = classifyBeads(objects, [], { labels, width: 200, afmPixelNm: 10, picksAfmPx: [{ x: 50, y: 5 }, { x: 140, y: 5 }, { x: 190, y: 5 }], pickRadiusNm: 300 });
    expect(r.heightFenceNm).toBeNull(); // 2 objects: no fence
    expect(r.beads.map((b) => [b.object.label, b.pickIndex, b.reasons])).toEqual([[1, 0, ['fiducial_pick']], [2, 1, ['fiducial_pick']]]);
    expect(r.unmatchedPicks).toEqual([2]);
  });
});

describe('subtractBeadImages', () => {
  it('takes out at least 95 % of the light of Airy-imaged beads above background within 12 px', () => {
    // Four 20 000-photon point beads rendered with a pixel-integrated Airy pattern 15 % wider than ideal (not the
    // Gaussian the fit assumes), on a flat 100 photons/px background; their images are fitted, then subtracted with
    // the profile measured on them. The excess light within 12 px must drop below 5 % of what it was.
    const places = [{ x: 30.3, y: 40.6 }, { x: 90.8, y: 30.1 }, { x: 60.2, y: 95.5 }, { x: 100.5, y: 100.4 }];
    const camera = { offsetCounts: 100, gainCountsPerPhoton: 1.8, readNoiseCounts: 2 };
    const frame = renderCorrelativeChannel({
      widthPx: 128, heightPx: 128, emitters: places.map((p) => ({ ...p, photons: 20000 })), psf: 'airy', emissionNm: 600, numericalAperture: 1.4,
      pixelSizeNm: 65, widthFactor: 1.15, backgroundPhotonsPerPx: 100, backgroundSlopePerPx: { x: 0, y: 0 }, camera, rng: createRng(8),
    }).raster;
    const fits = fitBeadSpots(frame, places, { sigmaPx: 1.4 }).map((f) => f!);
    const out = subtractBeadImages(frame, fits);
    const excess = (data: Float32Array) => {
      let s = 0;
      for (const b of places) {
        for (let y = Math.ceil(b.y - 12); y <= Math.floor(b.y + 12); y++) {
          for (let x = Math.ceil(b.x - 12); x <= Math.floor(b.x + 12); x++) {
            if (Math.hypot(x - b.x, y - b.y) < 12) s += data[y * 128 + x] - (100 + 1.8 * 100);
          }
        }
      }
      return s;
    };
    const before = excess(frame.data);
    expect(before).toBeGreaterThan(4 * 20000 * 1.8 * 0.9);
    expect(Math.abs(excess(out.raster.data)) / before).toBeLessThan(0.05);
    expect(excess(frame.data)).toBe(before); // the input frame is not modified
  });
});
