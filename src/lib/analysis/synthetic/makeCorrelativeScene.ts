import { AnalysisError } from '../errors';
import type { FiducialPair } from '../geometry/types';
import type { Affine, Point } from '../types';
import type {
  CorrelativeChannel, CorrelativeEmitterTruth, CorrelativeObjectTruth, CorrelativeScene, MakeCorrelativeSceneOptions,
} from './correlativeTypes';
import { createRng, type Rng } from './random';
import { renderCorrelativeChannel, type ChannelEmitter } from './renderCorrelativeChannel';
import { tipImagedProfile, type TipImagedProfile } from './tipImagedProfile';

const MAX_ATTEMPTS = 500;
/** Sub-samples per AFM pixel side when rasterising a tip-imaged profile (area average). */
const AFM_SUBSAMPLES = 3;
/** Vesicles of a sparse layout keep this far apart (nm): about twice the PSF FWHM of the default optics. */
const SPARSE_MIN_DISTANCE_NM = 450;
/** Smallest free gap between two imaged footprints in the AFM (nm). */
const MIN_FOOTPRINT_GAP_NM = 10;
/** Beads are kept this far from every other object (nm), in both layouts. */
const BEAD_CLEARANCE_NM = 450;
/** Point emitters spread over a bead's volume, so its image is the PSF convolved with the sphere. */
const BEAD_SUB_EMITTERS = 12;

interface Placed {
  afmPx: Point;
  /** Imaged footprint half-width (nm) and the exclusion distance it wants around it (nm). */
  halfWidthNm: number;
  clearanceNm: number;
}

/**
 * Build a seeded correlative test field that looks like real data and is not rendered with the model the analysis
 * fits: an AFM height map of spherical-cap vesicles and 100–200 nm multicolour beads imaged through a ball-ended
 * conical tip (numeric grey-scale dilation), with substrate tilt, scan-line offsets and noise; and fluorescence
 * frames, one per marker, rendered with a pixel-integrated Airy pattern 15 % wider than ideal (or a wider Gaussian)
 * on a sloped background of ~100 photons/px with Poisson noise and a camera (offset, gain, read noise). The frame
 * also holds vesicles outside the AFM field, beads, dim single emitters (60–250 photons) and free dye spots not on
 * vesicles; some AFM vesicles fall outside the frame. Each channel has its own true AFM → fluorescence map (a
 * rotated, mirrored common map plus a lateral chromatic shift); fiducial picks on the beads carry picking jitter.
 * Pure: every draw comes from one generator seeded by `seed`.
 *
 * @param options - see {@link MakeCorrelativeSceneOptions}
 * @returns rasters ready for analyzeField and the full ground truth
 * @throws AnalysisError `scene_too_crowded` when objects cannot be placed
 * @throws RangeError for inconsistent options
 * @see docs/references.md §2 (cap geometry), §3 (tip imaging), §4 (Airy and Gaussian PSF), §9 (bead sizes, EV heights)
 */
export function makeCorrelativeScene(options: MakeCorrelativeSceneOptions = {}): CorrelativeScene {
  const {
    seed = 1, layout = 'sparse', afmSizePx = 512, afmPixelNm = 10, flSizePx = 160, flPixelNm = 65, numericalAperture = 1.4,
    markers = [
      { marker: 'CD9', emissionNm: 520, positiveFraction: 0.6 },
      { marker: 'CD63', emissionNm: 590, positiveFraction: 0.45 },
      { marker: 'CD81', emissionNm: 670, positiveFraction: 0.5 },
    ],
    nbVesicles = layout === 'crowded' ? 130 : 60, nbVesiclesOutsideAfm = 40, unlabelledFraction = 0.3,
    labelPhotonsRange = [300, 2000], baseRadiusRangeNm = [25, 70], contactAngleRangeDeg = [20, 70],
    nbBeads = 6, nbBeadsOutsideAfm = 3, beadDiameterRangeNm = [100, 200], beadPhotonsRange = [6000, 20000],
    nbDimEmittersPerChannel = 25, dimPhotonsRange = [60, 250], nbFreeDyePerChannel = 8, freeDyePhotonsRange = [300, 1500],
    minEmitterDistanceNm = 250, nearVesicleFraction = 0.4, tipRadiusNm = 8, tipHalfAngleDeg = 20,
    tiltXNmPerPx = 0.03, tiltYNmPerPx = -0.02, lineOffsetSigmaNm = 0.6, afmNoiseSigmaNm = 0.3,
    psf = 'airy', psfWidthFactor = 1.15, backgroundPhotonsPerPx = 100, backgroundSlopePerPx = { x: 0.12, y: -0.08 },
    camera = { offsetCounts: 100, gainCountsPerPhoton: 1.8, readNoiseCounts: 2 },
    chromaticShiftNmPerChannel = 0, chromaticShiftAngleDeg = 30, rotationDeg = 4, mirrored = true,
    afmCentreInFrame = { x: 0.8, y: 0.5 }, pickJitterNm = 30,
  } = options;
  if (markers.length === 0) throw new RangeError('at least one marker is needed');
  for (const [name, r] of [['labelPhotonsRange', labelPhotonsRange], ['baseRadiusRangeNm', baseRadiusRangeNm], ['contactAngleRangeDeg', contactAngleRangeDeg],
    ['beadDiameterRangeNm', beadDiameterRangeNm], ['beadPhotonsRange', beadPhotonsRange], ['dimPhotonsRange', dimPhotonsRange], ['freeDyePhotonsRange', freeDyePhotonsRange]] as const) {
    if (!(r[0] > 0 && r[1] >= r[0])) throw new RangeError(`${name} must be [min, max] with 0 < min ≤ max, got [${r.join(', ')}]`);
  }
  if (contactAngleRangeDeg[1] >= 90) throw new RangeError('contactAngleRangeDeg must stay below 90° (flattened caps)');
  const rng = createRng(seed);
  const tip = { radiusNm: tipRadiusNm, halfAngleDeg: tipHalfAngleDeg };

  // the true maps: channel 0 is the common map, channel c adds c × the chromatic shift
  const flFromAfm = commonMap(afmSizePx, afmPixelNm, flSizePx, flPixelNm, rotationDeg, mirrored, afmCentreInFrame);
  const afmFromFl = invert(flFromAfm);
  const shiftAngle = (chromaticShiftAngleDeg * Math.PI) / 180;
  const channelMaps = markers.map((_, c) => {
    const shift = { x: (c * chromaticShiftNmPerChannel * Math.cos(shiftAngle)) / flPixelNm, y: (c * chromaticShiftNmPerChannel * Math.sin(shiftAngle)) / flPixelNm };
    const map: Affine = [flFromAfm[0], flFromAfm[1], flFromAfm[2] + shift.x, flFromAfm[3], flFromAfm[4], flFromAfm[5] + shift.y];
    return { shift, map };
  });

  // placement in the sample plane (AFM px, possibly outside the raster)
  const placed: Placed[] = [];
  const crowded = layout === 'crowded';
  const fits = (p: Point, halfWidthNm: number, clearanceNm: number): boolean =>
    placed.every((q) => {
      const dNm = Math.hypot(p.x - q.afmPx.x, p.y - q.afmPx.y) * afmPixelNm;
      return dNm >= Math.max(halfWidthNm + q.halfWidthNm + MIN_FOOTPRINT_GAP_NM, clearanceNm, q.clearanceNm);
    });
  const inRaster = (p: Point, halfWidthNm: number): boolean => {
    const m = halfWidthNm / afmPixelNm + 2;
    return p.x >= m && p.y >= m && p.x <= afmSizePx - 1 - m && p.y <= afmSizePx - 1 - m;
  };
  const touchesRaster = (p: Point, halfWidthNm: number): boolean => {
    const m = halfWidthNm / afmPixelNm + 2;
    return p.x >= -m && p.y >= -m && p.x <= afmSizePx - 1 + m && p.y <= afmSizePx - 1 + m;
  };
  const inFrame0 = (p: Point): boolean => p.x >= -0.5 && p.y >= -0.5 && p.x <= flSizePx - 0.5 && p.y <= flSizePx - 0.5;
  const place = (what: string, halfWidthNm: number, clearanceNm: number, draw: () => Point, ok: (p: Point) => boolean): Point => {
    for (let attempt = 0; attempt < MAX_ATTEMPTS; attempt++) {
      const p = draw();
      if (ok(p) && fits(p, halfWidthNm, clearanceNm)) {
        placed.push({ afmPx: p, halfWidthNm, clearanceNm });
        return p;
      }
    }
    throw new AnalysisError('scene_too_crowded', `Could not place ${what} ${placed.length + 1} in ${MAX_ATTEMPTS} attempts; use fewer objects or a larger field.`, { placed: placed.length });
  };
  const drawInRaster = () => ({ x: rng.uniform() * (afmSizePx - 1), y: rng.uniform() * (afmSizePx - 1) });
  const drawInFrame = () => applyMap(afmFromFl, { x: rng.uniform() * (flSizePx - 1), y: rng.uniform() * (flSizePx - 1) });

  interface Draft { afmPx: Point; heightNm: number; baseRadiusNm: number; contactAngleDeg: number; profile: TipImagedProfile; halfWidthNm: number; inAfmField: boolean; closePartner: number | null; isBead: boolean }
  const beadDrafts: Draft[] = [];
  const vesicleDrafts: Draft[] = [];
  const makeBead = (): Omit<Draft, 'afmPx' | 'inAfmField' | 'closePartner'> => {
    const d = uniformIn(rng, beadDiameterRangeNm);
    const r = d / 2;
    const profile = tipImagedProfile((u) => r + Math.sqrt(Math.max(0, r * r - u * u)), r, tip, 0.5);
    return { heightNm: d, baseRadiusNm: r, contactAngleDeg: 180, profile, halfWidthNm: imagedHalfWidth(profile), isBead: true };
  };
  const makeVesicle = (): Omit<Draft, 'afmPx' | 'inAfmField' | 'closePartner'> => {
    const a = uniformIn(rng, baseRadiusRangeNm);
    const theta = uniformIn(rng, contactAngleRangeDeg);
    const h = a * Math.tan((theta * Math.PI) / 360);
    const rc = (a * a + h * h) / (2 * h);
    const profile = tipImagedProfile((u) => Math.sqrt(Math.max(0, rc * rc - u * u)) - (rc - h), a, tip, 0.5);
    return { heightNm: h, baseRadiusNm: a, contactAngleDeg: theta, profile, halfWidthNm: imagedHalfWidth(profile), isBead: false };
  };
  const vesicleClearance = crowded ? 0 : SPARSE_MIN_DISTANCE_NM;
  // beads first (they want the most room)
  for (let i = 0; i < nbBeads; i++) {
    const b = makeBead();
    beadDrafts.push({ ...b, afmPx: place('bead', b.halfWidthNm, BEAD_CLEARANCE_NM, drawInRaster, (p) => inRaster(p, b.halfWidthNm)), inAfmField: true, closePartner: null });
  }
  for (let i = 0; i < nbBeadsOutsideAfm; i++) {
    const b = makeBead();
    beadDrafts.push({ ...b, afmPx: place('bead', b.halfWidthNm, BEAD_CLEARANCE_NM, drawInFrame, (p) => !touchesRaster(p, b.halfWidthNm)), inAfmField: false, closePartner: null });
  }
  const nbPairs = crowded ? Math.floor(nbVesicles / 4) : 0; // half of the vesicles in pairs
  for (let i = 0; i < nbVesicles - 2 * nbPairs; i++) {
    const v = makeVesicle();
    vesicleDrafts.push({ ...v, afmPx: place('vesicle', v.halfWidthNm, vesicleClearance, drawInRaster, (p) => inRaster(p, v.halfWidthNm)), inAfmField: true, closePartner: null });
  }
  for (let k = 0; k < nbPairs; k++) {
    const v = makeVesicle();
    const w = makeVesicle();
    let done = false;
    for (let attempt = 0; attempt < MAX_ATTEMPTS && !done; attempt++) {
      const p = drawInRaster();
      const gapNm = 10 + 30 * rng.uniform();
      const dirn = 2 * Math.PI * rng.uniform();
      const dPx = (v.halfWidthNm + w.halfWidthNm + gapNm) / afmPixelNm;
      const q = { x: p.x + dPx * Math.cos(dirn), y: p.y + dPx * Math.sin(dirn) };
      if (!inRaster(p, v.halfWidthNm) || !inRaster(q, w.halfWidthNm) || !fits(p, v.halfWidthNm, 0) || !fits(q, w.halfWidthNm, 0)) continue;
      placed.push({ afmPx: p, halfWidthNm: v.halfWidthNm, clearanceNm: 0 }, { afmPx: q, halfWidthNm: w.halfWidthNm, clearanceNm: 0 });
      const iv = vesicleDrafts.length;
      vesicleDrafts.push({ ...v, afmPx: p, inAfmField: true, closePartner: iv + 1 }, { ...w, afmPx: q, inAfmField: true, closePartner: iv });
      done = true;
    }
    if (!done) throw new AnalysisError('scene_too_crowded', `Could not place close pair ${k + 1} in ${MAX_ATTEMPTS} attempts; use fewer vesicles.`, { placed: placed.length });
  }
  for (let i = 0; i < nbVesiclesOutsideAfm; i++) {
    const v = makeVesicle();
    vesicleDrafts.push({ ...v, afmPx: place('vesicle', v.halfWidthNm, vesicleClearance, drawInFrame, (p) => !touchesRaster(p, v.halfWidthNm)), inAfmField: false, closePartner: null });
  }

  // labels and photons
  const names = markers.map((m) => m.marker);
  const toTruth = (d: Draft, index: number): CorrelativeObjectTruth => {
    const flPxByMarker: Record<string, Point> = {};
    const inFrameByMarker: Record<string, boolean> = {};
    const labels: Record<string, boolean> = {};
    const photonsByMarker: Record<string, number> = {};
    const unlabelled = !d.isBead && rng.uniform() < unlabelledFraction;
    markers.forEach((m, c) => {
      const p = applyMap(channelMaps[c].map, d.afmPx);
      flPxByMarker[m.marker] = p;
      inFrameByMarker[m.marker] = inFrame0(p);
      const on = d.isBead || (!unlabelled && rng.uniform() < m.positiveFraction);
      labels[m.marker] = on;
      photonsByMarker[m.marker] = on ? logUniformIn(rng, d.isBead ? beadPhotonsRange : labelPhotonsRange) : 0;
    });
    return {
      index, afmPx: d.afmPx, flPxByMarker, heightNm: d.heightNm, baseRadiusNm: d.baseRadiusNm, contactAngleDeg: d.contactAngleDeg,
      imagedHalfWidthNm: d.halfWidthNm, inAfmField: d.inAfmField, inFrameByMarker, labels, photonsByMarker, closePartner: d.closePartner,
    };
  };
  const vesicles = vesicleDrafts.map(toTruth);
  const beads = beadDrafts.map(toTruth);

  // the height map
  const topo = new Float32Array(afmSizePx * afmSizePx);
  for (const d of [...beadDrafts, ...vesicleDrafts]) if (d.inAfmField) rasterProfile(topo, afmSizePx, afmPixelNm, d.afmPx, d.profile);
  const raw = new Float32Array(topo.length);
  const centre = (afmSizePx - 1) / 2;
  for (let y = 0; y < afmSizePx; y++) {
    const lineNm = lineOffsetSigmaNm * rng.normal();
    for (let x = 0; x < afmSizePx; x++) {
      const i = y * afmSizePx + x;
      raw[i] = topo[i] + 3 + tiltXNmPerPx * (x - centre) + tiltYNmPerPx * (y - centre) + lineNm + afmNoiseSigmaNm * rng.normal();
    }
  }

  // emitters that are neither vesicles nor beads, per channel
  const emitters: CorrelativeEmitterTruth[] = [];
  markers.forEach((m) => {
    const occupied = [...vesicles, ...beads].map((o) => o.flPxByMarker[m.marker]);
    const minPx = minEmitterDistanceNm / flPixelNm;
    const farEnough = (p: Point) => inFrame0(p) && occupied.every((q) => Math.hypot(p.x - q.x, p.y - q.y) >= minPx);
    const targets = vesicles.filter((v) => v.inFrameByMarker[m.marker]);
    for (const [kind, n, range] of [['dim', nbDimEmittersPerChannel, dimPhotonsRange], ['free_dye', nbFreeDyePerChannel, freeDyePhotonsRange]] as const) {
      for (let k = 0; k < n; k++) {
        const near = targets.length > 0 && rng.uniform() < nearVesicleFraction;
        for (let attempt = 0; attempt < MAX_ATTEMPTS; attempt++) {
          let p: Point;
          if (near) {
            const t = targets[Math.floor(rng.uniform() * targets.length)].flPxByMarker[m.marker];
            const r = minPx + (200 / flPixelNm) * rng.uniform();
            const phi = 2 * Math.PI * rng.uniform();
            p = { x: t.x + r * Math.cos(phi), y: t.y + r * Math.sin(phi) };
          } else {
            p = { x: rng.uniform() * (flSizePx - 1), y: rng.uniform() * (flSizePx - 1) };
          }
          if (farEnough(p)) {
            emitters.push({ marker: m.marker, kind, flPx: p, photons: logUniformIn(rng, range), nearVesicle: near });
            break;
          }
        }
      }
    }
  });

  // the frames
  const channels: CorrelativeChannel[] = markers.map((m, c) => {
    const list: ChannelEmitter[] = [];
    for (const v of vesicles) if (v.photonsByMarker[m.marker] > 0) list.push({ ...v.flPxByMarker[m.marker], photons: v.photonsByMarker[m.marker] });
    for (const b of beads) {
      const centreFl = b.flPxByMarker[m.marker];
      const rPx = b.baseRadiusNm / flPixelNm;
      const share = b.photonsByMarker[m.marker] / BEAD_SUB_EMITTERS;
      for (let k = 0; k < BEAD_SUB_EMITTERS; k++) {
        const p = pointInBall(rng);
        list.push({ x: centreFl.x + rPx * p.x, y: centreFl.y + rPx * p.y, photons: share });
      }
    }
    for (const e of emitters) if (e.marker === m.marker) list.push({ ...e.flPx, photons: e.photons });
    const rendered = renderCorrelativeChannel({
      widthPx: flSizePx, heightPx: flSizePx, emitters: list, psf, emissionNm: m.emissionNm, numericalAperture, pixelSizeNm: flPixelNm,
      widthFactor: psfWidthFactor, backgroundPhotonsPerPx, backgroundSlopePerPx, camera, rng,
    });
    const modelPsfSigmaPx = (0.21 * m.emissionNm) / numericalAperture / flPixelNm;
    return {
      marker: m.marker, emissionNm: m.emissionNm, raster: rendered.raster, expectedPhotons: rendered.expectedPhotons,
      flFromAfm: channelMaps[c].map, chromaticShiftPx: channelMaps[c].shift, modelPsfSigmaPx,
      renderedPsfSigmaPx: psfWidthFactor * modelPsfSigmaPx, enclosedFraction: rendered.enclosedFraction,
    };
  });

  // a person's picks on the beads seen in both images
  const fiducialPicks: FiducialPair[] = [];
  const pickBeadIndices: number[] = [];
  for (const b of beads) {
    if (!b.inAfmField || !b.inFrameByMarker[names[0]]) continue;
    const fl = b.flPxByMarker[names[0]];
    fiducialPicks.push({
      afm: { x: b.afmPx.x + (pickJitterNm / afmPixelNm) * rng.normal(), y: b.afmPx.y + (pickJitterNm / afmPixelNm) * rng.normal() },
      fl: { x: fl.x + (pickJitterNm / flPixelNm) * rng.normal(), y: fl.y + (pickJitterNm / flPixelNm) * rng.normal() },
    });
    pickBeadIndices.push(b.index);
  }

  return {
    heightNm: { data: raw, width: afmSizePx, height: afmSizePx },
    topographyNm: { data: topo, width: afmSizePx, height: afmSizePx },
    afmPixelNm, channels, flPixelNm, numericalAperture, flFromAfm, fiducialPicks, pickBeadIndices, vesicles, beads, emitters,
    camera, backgroundPhotonsPerPx, tip, seed,
  };
}

/** Mirrored (in x), rotated, scaled map that puts the AFM raster's centre at a given place of the frame. */
function commonMap(afmSizePx: number, afmPixelNm: number, flSizePx: number, flPixelNm: number, rotationDeg: number, mirrored: boolean, centre: Point): Affine {
  const s = afmPixelNm / flPixelNm;
  const th = (rotationDeg * Math.PI) / 180;
  const m = mirrored ? -1 : 1;
  const a = m * s * Math.cos(th);
  const b = -s * Math.sin(th);
  const d = m * s * Math.sin(th);
  const e = s * Math.cos(th);
  const c0 = (afmSizePx - 1) / 2;
  const fx = centre.x * (flSizePx - 1);
  const fy = centre.y * (flSizePx - 1);
  return [a, b, fx - a * c0 - b * c0, d, e, fy - d * c0 - e * c0];
}

function applyMap(t: Affine, p: Point): Point {
  return { x: t[0] * p.x + t[1] * p.y + t[2], y: t[3] * p.x + t[4] * p.y + t[5] };
}

function invert(t: Affine): Affine {
  const [a, b, c, d, e, f] = t;
  const det = a * e - b * d;
  return [e / det, -b / det, (b * f - c * e) / det, -d / det, a / det, (c * d - a * f) / det];
}

function uniformIn(rng: Rng, r: readonly [number, number]): number {
  return r[0] + (r[1] - r[0]) * rng.uniform();
}

function logUniformIn(rng: Rng, r: readonly [number, number]): number {
  return Math.exp(Math.log(r[0]) + (Math.log(r[1]) - Math.log(r[0])) * rng.uniform());
}

/** Uniform point in the unit ball, projected on the image plane (x, y). */
function pointInBall(rng: Rng): Point {
  for (;;) {
    const x = 2 * rng.uniform() - 1;
    const y = 2 * rng.uniform() - 1;
    const z = 2 * rng.uniform() - 1;
    if (x * x + y * y + z * z <= 1) return { x, y };
  }
}

/** Radius where the imaged profile meets the substrate (nm). */
function imagedHalfWidth(profile: TipImagedProfile): number {
  const h = profile.heightsNm;
  let i = h.length - 1;
  while (i > 0 && h[i] <= 0) i--;
  // linear interpolation between the last positive sample and the first zero
  return (i + h[i] / Math.max(h[i] - (h[i + 1] ?? 0), 1e-12)) * profile.stepNm;
}

/** Area-averaged raster of a radial profile, max-combined with what is there (the tip follows the top surface). */
function rasterProfile(topo: Float32Array, size: number, pixelNm: number, c: Point, profile: TipImagedProfile): void {
  const { stepNm, heightsNm } = profile;
  const rMaxPx = ((heightsNm.length - 1) * stepNm) / pixelNm;
  const x0 = Math.max(0, Math.floor(c.x - rMaxPx - 1));
  const x1 = Math.min(size - 1, Math.ceil(c.x + rMaxPx + 1));
  const y0 = Math.max(0, Math.floor(c.y - rMaxPx - 1));
  const y1 = Math.min(size - 1, Math.ceil(c.y + rMaxPx + 1));
  const at = (rhoNm: number): number => {
    const f = rhoNm / stepNm;
    const i = Math.floor(f);
    if (i >= heightsNm.length - 1) return 0;
    const w = f - i;
    return heightsNm[i] * (1 - w) + heightsNm[i + 1] * w;
  };
  for (let y = y0; y <= y1; y++) {
    for (let x = x0; x <= x1; x++) {
      let sum = 0;
      for (let sy = 0; sy < AFM_SUBSAMPLES; sy++) {
        const dy = y - 0.5 + (sy + 0.5) / AFM_SUBSAMPLES - c.y;
        for (let sx = 0; sx < AFM_SUBSAMPLES; sx++) {
          const dx = x - 0.5 + (sx + 0.5) / AFM_SUBSAMPLES - c.x;
          sum += at(Math.hypot(dx, dy) * pixelNm);
        }
      }
      const z = sum / (AFM_SUBSAMPLES * AFM_SUBSAMPLES);
      const i = y * size + x;
      if (z > topo[i]) topo[i] = z;
    }
  }
}
