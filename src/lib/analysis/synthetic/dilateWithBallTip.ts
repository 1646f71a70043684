import type { Raster } from '../types';

/**
 * The image an AFM tip with a ball apex of radius R records of a surface: the grey-scale dilation of the surface by
 * the tip, image(x) = max over |u| ≤ R of [surface(x + u) − t(u)], with t(u) = R − √(R² − |u|²) the height of the
 * ball above its apex (the shank is taken as never touching). Sampled on the raster's own grid, so render the surface
 * finer than the AFM pixel (e.g. 4×) and keep every k-th sample when sub-pixel accuracy matters: on a grid of step s
 * the maximum is missed by at most about slope·s/2. Written here because no numeric package at hand dilates with a
 * non-flat structuring function; the cost is O(pixels × (2R/s)²). Pure; the input is not modified.
 *
 * @param surface - true surface heights (nm), row-major
 * @param pixelSizeNm - grid step of `surface` (nm/px), > 0
 * @param tipRadiusNm - ball radius R (nm), ≥ 0; 0 returns a copy
 * @returns the tip-dilated image (nm), same size
 * @throws RangeError for a non-positive pixel size or a negative tip radius
 * @see docs/references.md §3 (tip convolution; a cap of base a and height h images with half-width √(a² + 2hR))
 * @see Villarrubia JS 1997, J Res Natl Inst Stand Technol 102(4):425–454 (AFM imaging as grey-scale dilation)
 */
export function dilateWithBallTip(surface: Raster, pixelSizeNm: number, tipRadiusNm: number): Raster {
  if (!(pixelSizeNm > 0) || !Number.isFinite(pixelSizeNm)) throw new RangeError(`pixelSizeNm must be a positive finite number, got ${pixelSizeNm}`);
  if (!(tipRadiusNm >= 0) || !Number.isFinite(tipRadiusNm)) throw new RangeError(`tipRadiusNm must be a finite number ≥ 0, got ${tipRadiusNm}`);
  const { data, width, height } = surface;
  const out = new Float32Array(data.length);
  const reachPx = Math.floor(tipRadiusNm / pixelSizeNm);
  // the structuring function once: offsets (dx, dy) within R and the ball's height above its apex there
  const dxs: number[] = [];
  const dys: number[] = [];
  const lift: number[] = [];
  for (let dy = -reachPx; dy <= reachPx; dy++) {
    for (let dx = -reachPx; dx <= reachPx; dx++) {
      const d2 = (dx * dx + dy * dy) * pixelSizeNm * pixelSizeNm;
      if (d2 > tipRadiusNm * tipRadiusNm) continue;
      dxs.push(dx);
      dys.push(dy);
      lift.push(tipRadiusNm - Math.sqrt(tipRadiusNm * tipRadiusNm - d2));
    }
  }
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let best = -Infinity;
      for (let k = 0; k < dxs.length; k++) {
        const sx = x + dxs[k];
        const sy = y + dys[k];
        if (sx < 0 || sx >= width || sy < 0 || sy >= height) continue;
        const v = data[sy * width + sx] - lift[k];
        if (v > best) best = v;
      }
      out[y * width + x] = best;
    }
  }
  return { data: out, width, height };
}
