import { psfSigmaPx, renderFluorescenceScene, type SceneSpot } from '../../fluorescence';
import { applyAffine } from '../../geometry';
import { createRng, makeHeightScene, type MakeHeightSceneResult } from '../../synthetic';
import type { Affine, Point, Raster } from '../../types';

/** Truth of one vesicle of a synthetic field. */
export interface TrueVesicle {
  readonly afm: Point;
  readonly fl: Point;
  /** True when the mapped centre lies inside the fluorescence frame. */
  readonly inFrame: boolean;
  /** Photons of this vesicle's spot per marker; 0 = not labelled. */
  readonly photons: Readonly<Record<string, number>>;
}

export interface FieldScene {
  readonly afm: MakeHeightSceneResult;
  readonly afmPixelNm: number;
  readonly flPixelNm: number;
  readonly numericalAperture: number;
  readonly flFromAfm: Affine;
  readonly channels: { marker: string; raster: Raster; emissionNm: number }[];
  readonly vesicles: TrueVesicle[];
  readonly beadsAfm: Point[];
  readonly beadsFl: Point[];
}

export interface FieldSceneOptions {
  seed?: number;
  /** AFM side (px). */
  afmSize?: number;
  nbVesicles?: number;
  markers?: readonly string[];
  emissionNm?: readonly number[];
  /** Labelled spots get photons uniform in this range. */
  photonRange?: readonly [number, number];
  /** Probability that a vesicle carries a marker. */
  labelProbability?: number;
}

/**
 * A synthetic correlative field with known truth: spherical-cap vesicles and 400 nm beads on a tilted, noisy
 * substrate (AFM 10 nm/px); fluorescence at 65 nm/px (docs/references.md §9: 6.5 µm camera pixels at 100×) with Poisson
 * noise over 100 photons/px; a mirrored affine (scale 10/65, 7° rotation, slight shear) between the two, placed so
 * that a strip of the AFM field falls left of the fluorescence frame, which is 1.6× wider than the AFM field. Beads shine in every channel.
 */
export function makeFieldScene(options: FieldSceneOptions = {}): FieldScene {
  const {
    seed = 7, afmSize = 512, nbVesicles = 40, markers = ['CD9', 'CD63', 'CD81'], emissionNm = [520, 590, 670],
    photonRange = [300, 1500], labelProbability = 0.5,
  } = options;
  const afmPixelNm = 10;
  const flPixelNm = 65;
  const numericalAperture = 1.4;
  const s = afmPixelNm / flPixelNm;
  const theta = (7 * Math.PI) / 180;
  // linear part: s·R(θ)·diag(1, −1) with a 2 % shear along x, so a similarity cannot fit it exactly
  const a = s * Math.cos(theta);
  const b = s * Math.sin(theta);
  const d = s * Math.sin(theta);
  const e = -s * Math.cos(theta);
  const linear = [a + 0.02 * s, b, d, e];
  // a frame wider than the AFM field (as in practice), so empty places for background apertures exist
  const flSize = Math.round(afmSize * s * 1.6);
  const c0 = (afmSize - 1) / 2;
  // the AFM centre lands at a fifth of the frame width, so the left strip of the AFM field falls outside
  const target = { x: 0.2 * flSize, y: (flSize - 1) / 2 };
  const flFromAfm: Affine = [
    linear[0], linear[1], target.x - linear[0] * c0 - linear[1] * c0,
    linear[2], linear[3], target.y - linear[2] * c0 - linear[3] * c0,
  ];
  const beadsAfm = [
    { x: 0.6 * afmSize, y: 0.2 * afmSize }, { x: 0.85 * afmSize, y: 0.3 * afmSize }, { x: 0.5 * afmSize, y: 0.5 * afmSize },
    { x: 0.62 * afmSize, y: 0.82 * afmSize }, { x: 0.85 * afmSize, y: 0.75 * afmSize },
  ];
  const afm = makeHeightScene({
    seed, width: afmSize, height: afmSize, pixelSizeNm: afmPixelNm, nbVesicles, minGapPx: 12,
    beads: beadsAfm.map((p) => ({ xPx: p.x, yPx: p.y })),
  });
  const rng = createRng(seed * 7919 + 1);
  const vesicles: TrueVesicle[] = afm.truth
    .filter((t) => t.kind === 'vesicle')
    .map((t) => {
      const p = { x: t.xPx, y: t.yPx };
      const fl = applyAffine(flFromAfm, p);
      const photons: Record<string, number> = {};
      for (const m of markers) {
        photons[m] = rng.uniform() < labelProbability ? photonRange[0] + rng.uniform() * (photonRange[1] - photonRange[0]) : 0;
      }
      const inFrame = fl.x >= -0.5 && fl.x < flSize - 0.5 && fl.y >= -0.5 && fl.y < flSize - 0.5;
      return { afm: p, fl, inFrame, photons };
    });
  const beadsFl = beadsAfm.map((p) => applyAffine(flFromAfm, p));
  const channels = markers.map((marker, i) => {
    const sigmaPx = psfSigmaPx(emissionNm[i], numericalAperture, flPixelNm);
    const spots: SceneSpot[] = [
      ...vesicles.filter((v) => v.photons[marker] > 0).map((v) => ({ x: v.fl.x, y: v.fl.y, photons: v.photons[marker] })),
      ...beadsFl.map((p) => ({ x: p.x, y: p.y, photons: 4000 })),
    ];
    const raster = renderFluorescenceScene({
      widthPx: flSize, heightPx: flSize, sigmaPx, spots, rng: createRng(seed * 31 + i), backgroundPhotonsPerPx: 100,
    }).raster;
    return { marker, raster, emissionNm: emissionNm[i] };
  });
  return { afm, afmPixelNm, flPixelNm, numericalAperture, flFromAfm, channels, vesicles, beadsAfm, beadsFl };
}
