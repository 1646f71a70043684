/**
 * Half of the sampled Gaussian kernel that {@link blurRows} and the WebAssembly kernel share: half[j] is the weight
 * at ±j px, half[j] ∝ exp(−j²/2σ²) for j = 0 … radius with radius = max(1, ceil(3σ)) (the cut keeps 99.7 % of the
 * weight), normalised so that the full kernel, half[0] + 2·Σⱼ half[j], sums to 1.
 *
 * @param sigmaPx - Gaussian SD (px), > 0
 * @returns radius + 1 weights, centre first
 * @throws RangeError when sigmaPx is not a finite positive number
 */
export function gaussianHalfKernel(sigmaPx: number): Float64Array {
  if (!Number.isFinite(sigmaPx) || sigmaPx <= 0) {
    throw new RangeError(`sigmaPx must be a finite positive number, got ${sigmaPx}`);
  }
  const radius = Math.max(1, Math.ceil(3 * sigmaPx));
  const half = new Float64Array(radius + 1);
  let sum = 0;
  for (let j = 0; j <= radius; j++) {
    half[j] = Math.exp((-j * j) / (2 * sigmaPx * sigmaPx));
    sum += j === 0 ? half[j] : 2 * half[j];
  }
  for (let j = 0; j <= radius; j++) half[j] /= sum;
  return half;
}
