import { AnalysisError } from '../errors';
import { createRng } from './random';
import type { MakeHeightSceneOptions, MakeHeightSceneResult, SceneFeatureSpec, SceneTruth } from './types';

const MAX_PLACEMENT_ATTEMPTS = 200;

/**
 * Build a synthetic AFM height map: vesicles as spherical caps, beads as rigid spheres seen from
 * above (upper hemisphere on a pedestal of height r; the tip cannot reach under the equator),
 * a tilted and optionally bowed substrate, per-row scan-line offsets and white Gaussian noise.
 * Overlapping features take the higher surface (the tip follows the top surface). Pure and seeded.
 *
 * @param options - scene description; lengths in nm, positions in px (see {@link MakeHeightSceneOptions})
 * @returns the raw raster, the noise-free topography and the ground truth
 * @throws AnalysisError `scene_too_crowded` when random features cannot be placed without overlap
 * @throws RangeError for non-positive sizes or an inverted range
 * @see docs/references.md §2 (cap geometry: R_c = (a² + h²)/(2h))
 */
export function makeHeightScene(options: MakeHeightSceneOptions = {}): MakeHeightSceneResult {
  const {
    seed = 1, width = 256, height = 256, pixelSizeNm = 5, vesicles, nbVesicles = 20,
    baseRadiusRangeNm = [30, 60], heightRangeNm = [8, 30], beads, nbBeads = 0, beadHeightNm = 400,
    minGapPx = 4, marginPx = 3, tiltXNmPerPx = 0.02, tiltYNmPerPx = -0.015, offsetNm = 5,
    bowNmPerPx2 = 0, lineOffsetSigmaNm = 0.5, noiseSigmaNm = 0.15,
  } = options;
  if (!Number.isInteger(width) || !Number.isInteger(height) || width < 1 || height < 1) {
    throw new RangeError(`width and height must be positive integers, got ${width}×${height}`);
  }
  if (!(pixelSizeNm > 0)) throw new RangeError(`pixelSizeNm must be > 0, got ${pixelSizeNm}`);
  if (baseRadiusRangeNm[1] < baseRadiusRangeNm[0] || heightRangeNm[1] < heightRangeNm[0]) {
    throw new RangeError('ranges must be [min, max] with min ≤ max');
  }
  const rng = createRng(seed);

  // place features
  const truth: SceneTruth[] = [];
  const placeRandom = (radiusPx: number, make: (x: number, y: number) => SceneTruth): void => {
    for (let attempt = 0; attempt < MAX_PLACEMENT_ATTEMPTS; attempt++) {
      const lo = radiusPx + marginPx;
      const x = lo + rng.uniform() * (width - 1 - 2 * lo);
      const y = lo + rng.uniform() * (height - 1 - 2 * lo);
      const free = truth.every((t) => Math.hypot(t.xPx - x, t.yPx - y) >= t.baseRadiusNm / pixelSizeNm + radiusPx + minGapPx);
      if (free && lo < (width - 1) / 2 && lo < (height - 1) / 2) {
        truth.push(make(x, y));
        return;
      }
    }
    throw new AnalysisError('scene_too_crowded', `Could not place feature ${truth.length + 1} without overlap in ${MAX_PLACEMENT_ATTEMPTS} attempts; use fewer or smaller features or a larger scene.`, { placed: truth.length, width, height });
  };
  const beadSpecs = beads ?? [];
  for (const b of beadSpecs) {
    const h = b.heightNm ?? beadHeightNm;
    truth.push({ kind: 'bead', xPx: b.xPx, yPx: b.yPx, heightNm: h, baseRadiusNm: h / 2 });
  }
  if (!beads) {
    for (let i = 0; i < nbBeads; i++) {
      placeRandom(beadHeightNm / 2 / pixelSizeNm, (x, y) => ({ kind: 'bead', xPx: x, yPx: y, heightNm: beadHeightNm, baseRadiusNm: beadHeightNm / 2 }));
    }
  }
  if (vesicles) {
    for (const v of vesicles) truth.push({ kind: 'vesicle', ...v });
  } else {
    for (let i = 0; i < nbVesicles; i++) {
      const a = baseRadiusRangeNm[0] + rng.uniform() * (baseRadiusRangeNm[1] - baseRadiusRangeNm[0]);
      const h = heightRangeNm[0] + rng.uniform() * (heightRangeNm[1] - heightRangeNm[0]);
      placeRandom(a / pixelSizeNm, (x, y) => ({ kind: 'vesicle', xPx: x, yPx: y, baseRadiusNm: a, heightNm: h }));
    }
  }
  // vesicles first, then beads, in the returned truth
  truth.sort((p, q) => (p.kind === q.kind ? 0 : p.kind === 'vesicle' ? -1 : 1));

  // render the level topography
  const topo = new Float32Array(width * height);
  for (const f of truth) renderFeature(topo, width, height, pixelSizeNm, f);

  // substrate, scan lines, noise
  const data = new Float32Array(width * height);
  const lineOffsetsNm = new Float64Array(height);
  const xc = (width - 1) / 2;
  const yc = (height - 1) / 2;
  for (let y = 0; y < height; y++) lineOffsetsNm[y] = lineOffsetSigmaNm * rng.normal();
  for (let y = 0; y < height; y++) {
    const dy = y - yc;
    for (let x = 0; x < width; x++) {
      const dx = x - xc;
      const i = y * width + x;
      data[i] = topo[i] + offsetNm + tiltXNmPerPx * dx + tiltYNmPerPx * dy + bowNmPerPx2 * (dx * dx + dy * dy)
        + lineOffsetsNm[y] + noiseSigmaNm * rng.normal();
    }
  }
  return {
    raster: { data, width, height },
    topography: { data: topo, width, height },
    pixelSizeNm, truth, lineOffsetsNm, seed,
  };
}

/** Draw one feature into `topo` (max-combine). */
function renderFeature(topo: Float32Array, width: number, height: number, pixelSizeNm: number, f: SceneFeatureSpec & { kind: string }): void {
  const a = f.baseRadiusNm;
  const h = f.heightNm;
  if (!(a > 0) || !(h > 0)) throw new RangeError(`feature at (${f.xPx}, ${f.yPx}) needs baseRadiusNm > 0 and heightNm > 0`);
  const isBead = f.kind === 'bead';
  const sphereRadiusNm = isBead ? h / 2 : (a * a + h * h) / (2 * h);
  const footprintNm = isBead ? h / 2 : a;
  const rPx = footprintNm / pixelSizeNm;
  const x0 = Math.max(0, Math.floor(f.xPx - rPx));
  const x1 = Math.min(width - 1, Math.ceil(f.xPx + rPx));
  const y0 = Math.max(0, Math.floor(f.yPx - rPx));
  const y1 = Math.min(height - 1, Math.ceil(f.yPx + rPx));
  const r2Max = footprintNm * footprintNm;
  for (let y = y0; y <= y1; y++) {
    const dyNm = (y - f.yPx) * pixelSizeNm;
    for (let x = x0; x <= x1; x++) {
      const dxNm = (x - f.xPx) * pixelSizeNm;
      const rho2 = dxNm * dxNm + dyNm * dyNm;
      if (rho2 >= r2Max) continue;
      const cap = Math.sqrt(sphereRadiusNm * sphereRadiusNm - rho2);
      // cap: surface = sqrt(R² − ρ²) − (R − h); bead: r + sqrt(r² − ρ²)
      const z = isBead ? sphereRadiusNm + cap : cap - (sphereRadiusNm - h);
      const i = y * width + x;
      if (z > topo[i]) topo[i] = z;
    }
  }
}
