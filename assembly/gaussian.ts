// Separable Gaussian blur and fused Laplacian of Gaussian on float32 frames, f32x4 SIMD.
// Compiled by scripts/build-wasm.ts into src/lib/analysis/fluorescence/wasm/gaussianKernelBinary.ts; the JS side is
// src/lib/analysis/fluorescence/wasm/gaussianKernel.ts. Same kernel as src/lib/analysis/fluorescence/blurRows.ts:
// half[j] = exp(−j²/2σ²) for j = 0 … radius = max(1, ceil(3σ)), normalised to sum 1, edges replicated.
//
// The caller owns the memory: it places the frame at heapBase() and a scratch area of scratchBytes(width, radius)
// after it, and writes the half kernel (radius + 1 float32 weights, centre first) at the start of the scratch; the
// weights come from JS so both paths share one kernel, and the module stays small (no exp).
// dst may equal src: output row y is written only after every input row the later rows need is read.

/** Floats per inner-loop step: four f32x4 vectors, so each weight loaded serves 16 pixels (~5 % faster than 8). */
const BLOCK: i32 = 16;

// @ts-ignore: decorator
@inline function roundUp(n: i32, to: i32): i32 {
  return (n + to - 1) & ~(to - 1);
}

/** First free byte after the module's static data, 16-aligned: where the caller's frame goes. */
export function heapBase(): usize {
  return (__heap_base + 15) & ~15;
}

// Scratch layout, each part 16-aligned (bytes):
//   weights  (radius + 1) float32 weights, centre first (written by the caller)
//   padded   one input row with `radius` replicated pixels each side, rounded up to whole blocks
//   ring     2·(2·radius + 1) horizontally blurred rows, each stored twice (slot s and s + K) so the 2·radius + 1
//            rows under the vertical kernel always sit at one constant stride, without wrap-around or clamping
//   blurred  3 vertically blurred rows for the Laplacian, each with one replicated pixel each side
//   tail     one block, for the last width % BLOCK pixels of a row
// Rows in ring and blurred are padded to whole blocks, so vector stores never need a scalar tail there.

// @ts-ignore: decorator
@inline function rowBytes(width: i32): usize {
  return <usize>roundUp(width, BLOCK) << 2;
}
// @ts-ignore: decorator
@inline function paddedOffset(radius: i32): usize {
  return <usize>roundUp(radius + 1, 4) << 2;
}
// @ts-ignore: decorator
@inline function ringOffset(width: i32, radius: i32): usize {
  return paddedOffset(radius) + <usize>roundUp(roundUp(width, BLOCK) + 2 * radius, 4) * 4;
}
// @ts-ignore: decorator
@inline function blurredOffset(width: i32, radius: i32): usize {
  return ringOffset(width, radius) + <usize>(2 * (2 * radius + 1)) * rowBytes(width);
}
// @ts-ignore: decorator
@inline function blurredRowBytes(width: i32): usize {
  return rowBytes(width) + 32; // 16 bytes before pixel 0 (left pad at −1), ≥ 16 after the last block (right pad)
}
// @ts-ignore: decorator
@inline function tailOffset(width: i32, radius: i32): usize {
  return blurredOffset(width, radius) + 3 * blurredRowBytes(width);
}

/** Bytes of scratch that blur and laplacianOfGaussian need for this width and kernel radius. */
export function scratchBytes(width: i32, radius: i32): usize {
  return tailOffset(width, radius) + (<usize>BLOCK << 2);
}

/**
 * dst[x] = w₀·c[x] + Σⱼ wⱼ·(c[x − j·step] + c[x + j·step]) for nBlocks blocks of 16 floats, c = first + radius·step.
 * Mirrored taps are added before the multiply (half the multiplies); one routine serves both passes: step 4 bytes
 * along a padded row, step one row along the ring.
 */
function convolve(first: usize, dst: usize, nBlocks: i32, step: usize, weights: usize, radius: i32): void {
  const w0 = v128.load32_splat(weights);
  const centre = first + <usize>radius * step;
  const lastWeight = weights + (<usize>radius << 2);
  for (let b = 0; b < nBlocks; b++) {
    const o = <usize>(b * BLOCK) << 2;
    let a0 = f32x4.mul(w0, v128.load(centre + o));
    let a1 = f32x4.mul(w0, v128.load(centre + o, 16));
    let a2 = f32x4.mul(w0, v128.load(centre + o, 32));
    let a3 = f32x4.mul(w0, v128.load(centre + o, 48));
    let lo = centre + o - step;
    let hi = centre + o + step;
    for (let wp = weights + 4; wp <= lastWeight; wp += 4) {
      const wj = v128.load32_splat(wp);
      a0 = f32x4.add(a0, f32x4.mul(wj, f32x4.add(v128.load(lo), v128.load(hi))));
      a1 = f32x4.add(a1, f32x4.mul(wj, f32x4.add(v128.load(lo, 16), v128.load(hi, 16))));
      a2 = f32x4.add(a2, f32x4.mul(wj, f32x4.add(v128.load(lo, 32), v128.load(hi, 32))));
      a3 = f32x4.add(a3, f32x4.mul(wj, f32x4.add(v128.load(lo, 48), v128.load(hi, 48))));
      lo -= step;
      hi += step;
    }
    v128.store(dst + o, a0);
    v128.store(dst + o, a1, 16);
    v128.store(dst + o, a2, 32);
    v128.store(dst + o, a3, 48);
  }
}

/**
 * Horizontally blurs input row clamp(v) into ring slot (v + radius) mod K and its twin: virtual rows −radius … −1
 * and height … height − 1 + radius replicate the edge rows, which is the replicated-edge rule for the vertical pass.
 */
function blurRowIntoRing(src: usize, width: i32, height: i32, v: i32, scratch: usize, radius: i32): void {
  const row = src + (<usize>min(max(v, 0), height - 1) * <usize>width << 2);
  const padded = scratch + paddedOffset(radius);
  const first = load<f32>(row);
  const last = load<f32>(row + (<usize>(width - 1) << 2));
  for (let i = 0; i < radius; i++) store<f32>(padded + (<usize>i << 2), first);
  memory.copy(padded + (<usize>radius << 2), row, <usize>width << 2);
  // fill to the end of the last block too, so the unused lanes hold finite values
  const end = roundUp(width, BLOCK) + 2 * radius;
  for (let i = radius + width; i < end; i++) store<f32>(padded + (<usize>i << 2), last);

  const k = 2 * radius + 1;
  const bytes = rowBytes(width);
  const slot = scratch + ringOffset(width, radius) + <usize>((v + radius) % k) * bytes;
  convolve(padded, slot, roundUp(width, BLOCK) / BLOCK, 4, scratch, radius);
  memory.copy(slot + <usize>k * bytes, slot, bytes);
}

/** Vertical pass for output row y: nBlocks blocks into out (the caller handles a partial last block). */
// @ts-ignore: decorator
@inline function blurColumns(y: i32, out: usize, nBlocks: i32, width: i32, scratch: usize, radius: i32): void {
  const bytes = rowBytes(width);
  const first = scratch + ringOffset(width, radius) + <usize>(y % (2 * radius + 1)) * bytes;
  convolve(first, out, nBlocks, bytes, scratch, radius);
}

/** Fills the ring with the rows output row 0 needs, except the newest, which the main loop adds. */
function primeRing(src: usize, width: i32, height: i32, scratch: usize, radius: i32): void {
  for (let v = -radius; v < radius; v++) blurRowIntoRing(src, width, height, v, scratch, radius);
}

/** Gaussian blur of the width × height float32 frame at src into dst (may equal src); width, height, radius ≥ 1. */
export function blur(src: usize, dst: usize, width: i32, height: i32, radius: i32, scratch: usize): void {
  primeRing(src, width, height, scratch, radius);
  const whole = width & ~(BLOCK - 1);
  const tail = scratch + tailOffset(width, radius);
  for (let y = 0; y < height; y++) {
    blurRowIntoRing(src, width, height, y + radius, scratch, radius);
    const out = dst + (<usize>y * <usize>width << 2);
    blurColumns(y, out, whole / BLOCK, width, scratch, radius);
    if (whole < width) {
      // the last partial block goes through scratch: a full store would overwrite the next row's input
      const ringRow = scratch + ringOffset(width, radius) + <usize>(y % (2 * radius + 1)) * rowBytes(width);
      convolve(ringRow + (<usize>whole << 2), tail, 1, rowBytes(width), scratch, radius);
      memory.copy(out + (<usize>whole << 2), tail, <usize>(width - whole) << 2);
    }
  }
}

/** out[x] = factor·(m[x−1] + m[x+1] + u[x] + d[x] − 4·m[x]); m carries replicated pixels at −1 and width. */
function laplacianRow(up: usize, mid: usize, down: usize, out: usize, width: i32, factor: f32): void {
  const f = f32x4.splat(factor);
  const four = f32x4.splat(4);
  const whole = width & ~3;
  for (let x = 0; x < whole; x += 4) {
    const o = <usize>x << 2;
    const sides = f32x4.add(v128.load(mid + o - 4), v128.load(mid + o + 4));
    const ud = f32x4.add(v128.load(up + o), v128.load(down + o));
    v128.store(out + o, f32x4.mul(f, f32x4.sub(f32x4.add(sides, ud), f32x4.mul(four, v128.load(mid + o)))));
  }
  for (let x = whole; x < width; x++) {
    const o = <usize>x << 2;
    const sides = load<f32>(mid + o - 4) + load<f32>(mid + o + 4);
    const ud = load<f32>(up + o) + load<f32>(down + o);
    store<f32>(out + o, factor * (sides + ud - 4 * load<f32>(mid + o)));
  }
}

/**
 * factor·∇²(G_σ * I) with the 5-point Laplacian, edges replicated, into dst (may equal src). The blurred image is
 * never stored whole: the last three blurred rows live in scratch and row y − 1 is finished as soon as row y exists.
 */
export function laplacianOfGaussian(
  src: usize, dst: usize, width: i32, height: i32, radius: i32, factor: f32, scratch: usize,
): void {
  primeRing(src, width, height, scratch, radius);
  const rowStride = blurredRowBytes(width);
  const blurred = scratch + blurredOffset(width, radius) + 16; // pixel 0 of blurred row 0
  const nBlocks = roundUp(width, BLOCK) / BLOCK;
  for (let y = 0; y < height; y++) {
    blurRowIntoRing(src, width, height, y + radius, scratch, radius);
    const row = blurred + <usize>(y % 3) * rowStride;
    blurColumns(y, row, nBlocks, width, scratch, radius);
    store<f32>(row - 4, load<f32>(row));
    store<f32>(row + (<usize>width << 2), load<f32>(row + (<usize>(width - 1) << 2)));
    if (y >= 1) {
      const mid = blurred + <usize>((y - 1) % 3) * rowStride;
      const up = y >= 2 ? blurred + <usize>((y - 2) % 3) * rowStride : mid;
      laplacianRow(up, mid, row, dst + (<usize>(y - 1) * <usize>width << 2), width, factor);
    }
  }
  const mid = blurred + <usize>((height - 1) % 3) * rowStride;
  const up = height >= 2 ? blurred + <usize>((height - 2) % 3) * rowStride : mid;
  laplacianRow(up, mid, mid, dst + (<usize>(height - 1) * <usize>width << 2), width, factor);
}
