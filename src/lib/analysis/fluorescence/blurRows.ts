import type { Raster } from '../types';

/**
 * Gaussian blur streamed row by row: calls `emit(y, row)` for y = 0 … height−1 in order, with `row` the blurred
 * row y (float64). Separable, edges replicated, kernel cut at 3σ (99.7 % of the weight) and normalised to sum 1.
 *
 * Only 2·radius + 1 horizontally blurred rows are kept (a ring), and each input row is blurred once, so the working
 * set stays in cache; each pass accumulates a whole row per tap pair in a float64 buffer, which V8 compiles to
 * tight loops. Callers that need neighbouring rows (a Laplacian) can rely on the last three emitted rows staying
 * valid: `row` cycles through three buffers.
 *
 * @param raster - input image (any unit); not modified
 * @param sigmaPx - Gaussian SD (px), > 0
 * @param emit - receives each blurred row (same unit as the input)
 * @throws RangeError when sigmaPx is not a finite positive number
 */
export function blurRows(raster: Raster, sigmaPx: number, emit: (y: number, row: Float64Array) => void): void {
  if (!Number.isFinite(sigmaPx) || sigmaPx <= 0) {
    throw new RangeError(`sigmaPx must be a finite positive number, got ${sigmaPx}`);
  }
  const { width, height, data } = raster;
  // half kernel: half[0] is the centre tap, half[j] the weight at ±j
  const radius = Math.max(1, Math.ceil(3 * sigmaPx));
  const half = new Float64Array(radius + 1);
  let sum = 0;
  for (let j = 0; j <= radius; j++) {
    half[j] = Math.exp((-j * j) / (2 * sigmaPx * sigmaPx));
    sum += j === 0 ? half[j] : 2 * half[j];
  }
  for (let j = 0; j <= radius; j++) half[j] /= sum;

  const ringRows = 2 * radius + 1;
  const ring = new Float64Array(ringRows * width);
  const padded = new Float64Array(width + 2 * radius);
  const outRows = [new Float64Array(width), new Float64Array(width), new Float64Array(width)];
  const c = half[0];
  let lastBlurred = -1;
  for (let y = 0; y < height; y++) {
    // horizontal blur of the input rows row y needs, each once
    const need = Math.min(height - 1, y + radius);
    while (lastBlurred < need) {
      const k = ++lastBlurred;
      const src = k * width;
      for (let x = 0; x < width; x++) padded[x + radius] = data[src + x];
      for (let x = 0; x < radius; x++) {
        padded[x] = data[src];
        padded[radius + width + x] = data[src + width - 1];
      }
      const dst = (k % ringRows) * width;
      for (let x = 0; x < width; x++) {
        let acc = c * padded[x + radius];
        for (let j = 1; j <= radius; j++) acc += half[j] * (padded[x + radius - j] + padded[x + radius + j]);
        ring[dst + x] = acc;
      }
    }

    // vertical blur
    const row = outRows[y % 3];
    const mid = (y % ringRows) * width;
    for (let x = 0; x < width; x++) row[x] = c * ring[mid + x];
    for (let j = 1; j <= radius; j++) {
      const w = half[j];
      const up = (Math.max(0, y - j) % ringRows) * width;
      const down = (Math.min(height - 1, y + j) % ringRows) * width;
      for (let x = 0; x < width; x++) row[x] += w * (ring[up + x] + ring[down + x]);
    }
    emit(y, row);
  }
}
