import { AnalysisError } from '../errors';
import type { Raster } from '../types';
import { capBaseRadiusFromSlice } from './capBaseRadiusFromSlice';
import { fitSphericalCap } from './fitSphericalCap';
import { solveLinearSystem } from './solveLinearSystem';
import { tipCorrectedCap } from './tipCorrectedCap';
import type { CapSizeFlag, DetectedRegion, FitSphericalCapResult, MeasureVesicleOptions, MeasureVesicleResult, SphericalCapResult } from './types';
import { validateRaster } from './validateRaster';

/**
 * Measure one labelled region of a levelled height map.
 * - centroid: weighted by max(h, 0), sub-pixel;
 * - apex height: quadratic surface z = c₀ + c₁x + c₂y + c₃x² + c₄xy + c₅y² fitted by least squares on a
 *   (2w+1)² window around the highest pixel (region pixels only), evaluated at its maximum; falls back to
 *   the highest pixel when the fit has no interior maximum;
 * - area and volume: pixel counts times pixel area; volume = Σ max(h, 0)·px²;
 * - perimeter: (π/4) × number of pixel edges between the region and the rest (crack length). A
 *   crack path is a Manhattan length, which over all orientations averages 4/π times the Euclidean
 *   length (Cauchy–Crofton, from memory). A digitised disk of r px spans 2r ± 1 px per axis depending on its
 *   sub-pixel phase, so its circularity lies between (r/(r+½))² and (r/(r−½))² and is ≈ 1 on average;
 * - footprint: diameter 2√(A/π) of the thresholded pixels (tip-broadened, threshold-dependent), and its half-width
 *   extrapolated to 0 nm as a cap (`apparentBaseRadiusNm`);
 * - cap model: a sphere fitted to the region's surface above the threshold ({@link fitSphericalCap}), then
 *   R_c = R_image − R and a = √(h(2R_c − h)) ({@link tipCorrectedCap}), h the fitted apex; flagged
 *   `cap_fit_failed` when the fit fails, its RMS residual exceeds a fifth of the height, or its base is
 *   more than 1.5× (+ 2 px) or less than 0.5× the extrapolated footprint (not a cap; the margin leaves room for a
 *   footprint cut by a touching neighbour).
 *
 * @param levelled - levelled heights (nm)
 * @param labels - label map from {@link detectVesicles}, same size
 * @param region - the region to measure (its label and bounding box)
 * @param pixelSizeNm - pixel size (nm/px), > 0
 * @param options - see {@link MeasureVesicleOptions}
 * @returns measurements and the spherical-cap model
 * @throws AnalysisError `empty_region` when no pixel carries the region's label inside its box
 * @throws RangeError for mismatched sizes or a non-positive pixel size
 * @see docs/references.md §2 and §3 (cap geometry, tip broadening)
 */
export function measureVesicle(
  levelled: Raster, labels: Int32Array, region: DetectedRegion, pixelSizeNm: number, options: MeasureVesicleOptions = {},
): MeasureVesicleResult {
  const { tipRadiusNm = 0, apexFitHalfWidthPx = 2, thresholdNm = 0 } = options;
  validateRaster(levelled, 'levelled');
  const { data, width, height } = levelled;
  if (labels.length !== data.length) throw new RangeError(`labels length ${labels.length} ≠ raster size ${data.length}`);
  if (!(pixelSizeNm > 0) || !Number.isFinite(pixelSizeNm)) throw new RangeError(`pixelSizeNm must be a positive finite number, got ${pixelSizeNm}`);
  if (!(tipRadiusNm >= 0)) throw new RangeError(`tipRadiusNm must be ≥ 0, got ${tipRadiusNm}`);
  const { label } = region;
  const x0 = Math.max(0, region.xMin);
  const x1 = Math.min(width - 1, region.xMax);
  const y0 = Math.max(0, region.yMin);
  const y1 = Math.min(height - 1, region.yMax);

  // one pass over the box
  let areaPx = 0;
  let sumH = 0;
  let sumW = 0;
  let sumWx = 0;
  let sumWy = 0;
  let sumX = 0;
  let sumY = 0;
  let maxH = -Infinity;
  let maxIdx = -1;
  let cracks = 0;
  for (let y = y0; y <= y1; y++) {
    for (let x = x0; x <= x1; x++) {
      const i = y * width + x;
      if (labels[i] !== label) continue;
      const h = data[i];
      areaPx++;
      sumH += h;
      sumX += x;
      sumY += y;
      if (h > 0) {
        sumW += h;
        sumWx += h * x;
        sumWy += h * y;
      }
      if (h > maxH) {
        maxH = h;
        maxIdx = i;
      }
      if (x === 0 || labels[i - 1] !== label) cracks++;
      if (x === width - 1 || labels[i + 1] !== label) cracks++;
      if (y === 0 || labels[i - width] !== label) cracks++;
      if (y === height - 1 || labels[i + width] !== label) cracks++;
    }
  }
  if (areaPx === 0) {
    throw new AnalysisError('empty_region', `No pixel has label ${label} inside its bounding box; pass the labels returned with this region.`, { label });
  }
  const centroidPx = sumW > 0 ? { x: sumWx / sumW, y: sumWy / sumW } : { x: sumX / areaPx, y: sumY / areaPx };

  // apex
  const apex = apexFitHalfWidthPx > 0 ? fitApex(data, labels, width, height, label, maxIdx, apexFitHalfWidthPx) : null;
  const apexHeightNm = apex ?? maxH;

  // sizes
  const pixelAreaNm2 = pixelSizeNm * pixelSizeNm;
  const projectedAreaNm2 = areaPx * pixelAreaNm2;
  const footprintRadiusNm = Math.sqrt(projectedAreaNm2 / Math.PI);
  const perimeterNm = (Math.PI / 4) * cracks * pixelSizeNm;

  // footprint extrapolated to 0 nm
  let apparentBaseRadiusNm = footprintRadiusNm;
  if (thresholdNm > 0 && apexHeightNm > thresholdNm) {
    try {
      apparentBaseRadiusNm = capBaseRadiusFromSlice(footprintRadiusNm, thresholdNm, apexHeightNm);
    } catch (e) {
      if (!(e instanceof AnalysisError)) throw e;
    }
  }

  // cap model: sphere through the surface, then the tip taken off
  let capFit: FitSphericalCapResult | null = null;
  let cap: SphericalCapResult | null = null;
  let capFlag: CapSizeFlag | null = 'cap_fit_failed';
  try {
    capFit = fitSphericalCap(levelled, labels, region, pixelSizeNm, { minHeightNm: thresholdNm });
  } catch (e) {
    if (!(e instanceof AnalysisError)) throw e;
  }
  // a residual above a fifth of the height means a lumpy or flat-topped object that a cap describes poorly
  // and the fitted surface must agree with the outline: a flat-topped object fits a vast, shallow sphere
  const imagedBaseNm = capFit ? Math.sqrt(Math.max(0, capFit.apexHeightNm * (2 * capFit.sphereRadiusNm - capFit.apexHeightNm))) : 0;
  const outlineAgrees = imagedBaseNm <= 1.5 * apparentBaseRadiusNm + 2 * pixelSizeNm && imagedBaseNm >= 0.5 * apparentBaseRadiusNm;
  if (capFit && capFit.apexHeightNm > 0 && capFit.rmsResidualNm <= capFit.apexHeightNm / 5 && outlineAgrees) {
    ({ cap, flag: capFlag } = tipCorrectedCap(capFit.sphereRadiusNm, capFit.apexHeightNm, tipRadiusNm));
  }

  return {
    label,
    centroidPx,
    maxHeightNm: maxH,
    apexHeightNm,
    meanHeightNm: sumH / areaPx,
    areaPx,
    projectedAreaNm2,
    footprintDiameterNm: 2 * footprintRadiusNm,
    volumeNm3: sumW * pixelAreaNm2,
    perimeterNm,
    circularity: (4 * Math.PI * projectedAreaNm2) / (perimeterNm * perimeterNm),
    apparentBaseRadiusNm,
    cap,
    capFlag,
    capFit,
    split: region.split,
    diagnostics: { apexFit: apex === null ? 'max_pixel' : 'quadratic', tipCorrected: cap !== null && capFlag === null && tipRadiusNm > 0 },
  };
}

/** Height at the maximum of a local quadratic fit around pixel `centre`, or null if the fit has no interior maximum. */
function fitApex(
  data: Float32Array, labels: Int32Array, width: number, height: number, label: number, centre: number, half: number,
): number | null {
  const cx = centre % width;
  const cy = (centre - cx) / width;
  // plain arrays, not ml-matrix objects: see solveLinearSystem
  const normal = new Float64Array(36);
  const rhs = new Float64Array(6);
  const f = new Float64Array(6);
  let count = 0;
  for (let dy = -half; dy <= half; dy++) {
    const y = cy + dy;
    if (y < 0 || y >= height) continue;
    for (let dx = -half; dx <= half; dx++) {
      const x = cx + dx;
      if (x < 0 || x >= width) continue;
      const i = y * width + x;
      if (labels[i] !== label) continue;
      f[0] = 1; f[1] = dx; f[2] = dy; f[3] = dx * dx; f[4] = dx * dy; f[5] = dy * dy;
      const z = data[i];
      for (let a = 0; a < 6; a++) {
        rhs[a] += f[a] * z;
        for (let b = 0; b < 6; b++) normal[a * 6 + b] += f[a] * f[b];
      }
      count++;
    }
  }
  if (count < 9) return null;
  const c = solveLinearSystem(normal, rhs);
  if (!c) return null;
  // maximum: gradient zero, Hessian [[2c3, c4], [c4, 2c5]] negative definite
  const hxx = 2 * c[3];
  const hyy = 2 * c[5];
  const hxy = c[4];
  const det = hxx * hyy - hxy * hxy;
  if (!(hxx < 0 && det > 0)) return null;
  const sx = (-c[1] * hyy + c[2] * hxy) / det;
  const sy = (-c[2] * hxx + c[1] * hxy) / det;
  if (!(Math.abs(sx) <= half && Math.abs(sy) <= half)) return null;
  const z = c[0] + c[1] * sx + c[2] * sy + c[3] * sx * sx + c[4] * sx * sy + c[5] * sy * sy;
  return Number.isFinite(z) ? z : null;
}
