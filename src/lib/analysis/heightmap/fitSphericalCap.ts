import { AnalysisError } from '../errors';
import type { Raster } from '../types';
import { solveLinearSystem } from './solveLinearSystem';
import type { DetectedRegion, FitSphericalCapOptions, FitSphericalCapResult } from './types';

/** Fewest pixels for four parameters with some to spare. */
const MIN_PIXELS = 8;

/**
 * Fit a sphere to the surface of one labelled region of a levelled height map (its pixels above `minHeightNm`, in
 * nm on all three axes): an algebraic fit x² + y² + z² = 2x₀x + 2y₀y + 2z_c·z + c (linear least squares) for a
 * start, then Gauss–Newton on the orthogonal distances |p − c| − ρ. A ball-tip image of a spherical cap (θ ≤ 90°)
 * is itself a cap of the same height on a sphere of radius R_c + R, so the fit sees through the tip broadening
 * wherever the footprint was cut (threshold, a touching neighbour's watershed line): only the surface is used,
 * not the outline. Written here because the fit is four parameters on a few hundred points per vesicle, where a
 * general optimiser's numeric gradients and per-call closures would cost more than the fit itself.
 *
 * @param levelled - levelled heights (nm)
 * @param labels - label map, same size
 * @param region - the region to fit (label and bounding box)
 * @param pixelSizeNm - pixel size (nm/px), > 0
 * @param options - see {@link FitSphericalCapOptions}
 * @returns the sphere (centre in px of the image, radius and apex in nm) and the RMS orthogonal residual
 * @throws AnalysisError `cap_fit_failed` (details.reason: `too_few_pixels`, `singular`, `not_convex`, `centre_outside`)
 * @throws RangeError for mismatched sizes or a non-positive pixel size
 * @see docs/references.md §2 (cap geometry) and §3 (the tip image of a cap)
 * @see Kåsa I 1976, IEEE Trans Instrum Meas 25(1):8–14 (algebraic circle fit; from memory)
 * @see Forbes AB 1989, NPL Report DITC 140/89 (least-squares spheres by Gauss–Newton on distances; from memory)
 */
export function fitSphericalCap(
  levelled: Raster, labels: Int32Array, region: DetectedRegion, pixelSizeNm: number, options: FitSphericalCapOptions = {},
): FitSphericalCapResult {
  const { minHeightNm = 0, maxIterations = 30 } = options;
  const { data, width, height } = levelled;
  if (labels.length !== data.length) throw new RangeError(`labels length ${labels.length} ≠ raster size ${data.length}`);
  if (!(pixelSizeNm > 0) || !Number.isFinite(pixelSizeNm)) throw new RangeError(`pixelSizeNm must be a positive finite number, got ${pixelSizeNm}`);
  const fail = (reason: string, message: string, extra: Record<string, number> = {}): never => {
    throw new AnalysisError('cap_fit_failed', message, { label: region.label, reason, ...extra });
  };

  // gather: coordinates in nm about the peak, so the sums stay well conditioned
  const x0 = Math.max(0, region.xMin);
  const x1 = Math.min(width - 1, region.xMax);
  const y0 = Math.max(0, region.yMin);
  const y1 = Math.min(height - 1, region.yMax);
  const ox = region.peakPx.x;
  const oy = region.peakPx.y;
  let n = 0;
  for (let y = y0; y <= y1; y++) for (let x = x0; x <= x1; x++) if (labels[y * width + x] === region.label && data[y * width + x] > minHeightNm) n++;
  if (n < MIN_PIXELS) fail('too_few_pixels', `Region ${region.label} has ${n} pixels above ${minHeightNm} nm; a spherical cap needs at least ${MIN_PIXELS}.`);
  const px = new Float64Array(n);
  const py = new Float64Array(n);
  const pz = new Float64Array(n);
  let k = 0;
  let zSum = 0;
  for (let y = y0; y <= y1; y++) {
    for (let x = x0; x <= x1; x++) {
      const i = y * width + x;
      if (labels[i] !== region.label || !(data[i] > minHeightNm)) continue;
      px[k] = (x - ox) * pixelSizeNm;
      py[k] = (y - oy) * pixelSizeNm;
      pz[k] = data[i];
      zSum += data[i];
      k++;
    }
  }

  // start: algebraic fit, rows [x, y, z, 1] against x² + y² + z²
  const normal = new Float64Array(16);
  const rhs = new Float64Array(4);
  const f = new Float64Array(4);
  for (let j = 0; j < n; j++) {
    f[0] = px[j]; f[1] = py[j]; f[2] = pz[j]; f[3] = 1;
    const t = px[j] * px[j] + py[j] * py[j] + pz[j] * pz[j];
    for (let a = 0; a < 4; a++) {
      rhs[a] += f[a] * t;
      for (let b = 0; b < 4; b++) normal[a * 4 + b] += f[a] * f[b];
    }
  }
  const start = solveLinearSystem(normal, rhs);
  if (!start) return fail('singular', `Region ${region.label} is flat or too small in one direction for a spherical cap.`);
  let cx = start[0] / 2;
  let cy = start[1] / 2;
  let cz = start[2] / 2;
  let rho = Math.sqrt(start[3] + cx * cx + cy * cy + cz * cz);
  if (!Number.isFinite(rho)) return fail('singular', `Region ${region.label} fits no sphere.`);

  // refine: Gauss–Newton on orthogonal distances, a step halved while it does not lower the cost
  let cost = sphereCost(px, py, pz, cx, cy, cz, rho);
  let iterations = 0;
  const jtj = new Float64Array(16);
  const jtr = new Float64Array(4);
  for (; iterations < maxIterations; iterations++) {
    jtj.fill(0);
    jtr.fill(0);
    for (let j = 0; j < n; j++) {
      const dx = px[j] - cx;
      const dy = py[j] - cy;
      const dz = pz[j] - cz;
      const d = Math.sqrt(dx * dx + dy * dy + dz * dz) || 1e-12;
      f[0] = -dx / d; f[1] = -dy / d; f[2] = -dz / d; f[3] = -1;
      const r = d - rho;
      for (let a = 0; a < 4; a++) {
        jtr[a] -= f[a] * r;
        for (let b = 0; b < 4; b++) jtj[a * 4 + b] += f[a] * f[b];
      }
    }
    const step = solveLinearSystem(jtj, jtr);
    if (!step) break;
    let scale = 1;
    let accepted = false;
    for (let h = 0; h < 10; h++, scale /= 2) {
      const c = sphereCost(px, py, pz, cx + scale * step[0], cy + scale * step[1], cz + scale * step[2], rho + scale * step[3]);
      if (c <= cost) {
        cx += scale * step[0]; cy += scale * step[1]; cz += scale * step[2]; rho += scale * step[3];
        accepted = cost - c > 1e-12 * (1 + cost);
        cost = c;
        break;
      }
    }
    if (!accepted) break;
  }

  // check: a cap seen from above, centred over its own pixels
  const rmsResidualNm = Math.sqrt(cost / n);
  const apexHeightNm = cz + rho;
  // a bowl (concave) has its centre above its points
  if (!(rho > 0) || !Number.isFinite(apexHeightNm) || !(cz < zSum / n)) {
    fail('not_convex', `Region ${region.label} does not bulge like a spherical cap (fitted sphere radius ${rho.toFixed(1)} nm).`, {
      sphereRadiusNm: rho, centreHeightNm: cz, rmsResidualNm, iterations,
    });
  }
  const centrePx = { x: ox + cx / pixelSizeNm, y: oy + cy / pixelSizeNm };
  if (centrePx.x < x0 - 0.5 || centrePx.x > x1 + 0.5 || centrePx.y < y0 - 0.5 || centrePx.y > y1 + 0.5) {
    fail('centre_outside', `The sphere fitted to region ${region.label} is centred outside the region; it is not a cap.`);
  }
  return { centrePx, sphereRadiusNm: rho, apexHeightNm, rmsResidualNm, nbPixels: n, nbIterations: iterations };
}

/** Σ (|p − c| − ρ)². */
function sphereCost(px: Float64Array, py: Float64Array, pz: Float64Array, cx: number, cy: number, cz: number, rho: number): number {
  let s = 0;
  for (let j = 0; j < px.length; j++) {
    const r = Math.sqrt((px[j] - cx) ** 2 + (py[j] - cy) ** 2 + (pz[j] - cz) ** 2) - rho;
    s += r * r;
  }
  return s;
}
