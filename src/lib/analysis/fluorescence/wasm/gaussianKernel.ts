import type { Raster } from '../../types';
import { gaussianHalfKernel } from '../gaussianHalfKernel';
import { GAUSSIAN_KERNEL_WASM_BASE64 } from './gaussianKernelBinary';

/** The module's exports (assembly/gaussian.ts); pointers and sizes in bytes, lengths in pixels. */
interface KernelExports {
  readonly memory: WebAssembly.Memory;
  heapBase(): number;
  scratchBytes(width: number, radius: number): number;
  blur(src: number, dst: number, width: number, height: number, radius: number, scratch: number): void;
  laplacianOfGaussian(
    src: number, dst: number, width: number, height: number, radius: number, factor: number, scratch: number,
  ): void;
}

const PAGE_BYTES = 65536;
/** wasm32 addresses 4 GiB at most. */
const MAX_BYTES = 65536 * PAGE_BYTES;

let bytes: Uint8Array<ArrayBuffer> | undefined;
/** undefined: not tried yet; null: this engine cannot run the module. */
let kernel: KernelExports | null | undefined;

function binary(): Uint8Array<ArrayBuffer> {
  if (!bytes) {
    const text = atob(GAUSSIAN_KERNEL_WASM_BASE64);
    bytes = new Uint8Array(text.length);
    for (let i = 0; i < text.length; i++) bytes[i] = text.charCodeAt(i);
  }
  return bytes;
}

/**
 * One instance per realm (thread), made on first use. Compilation is synchronous, which every engine allows for a
 * module this small (under 4 KB, a limit some browsers put on synchronous compilation on the main thread, from
 * memory); any failure only means the callers use their JavaScript path.
 */
function instance(): KernelExports | null {
  if (kernel === undefined) {
    try {
      kernel = typeof WebAssembly === 'object' && WebAssembly.validate(binary())
        ? (new WebAssembly.Instance(new WebAssembly.Module(binary()), {}).exports as unknown as KernelExports)
        : null;
    } catch {
      kernel = null;
    }
  }
  return kernel;
}

/**
 * Whether this JavaScript engine runs the WebAssembly SIMD Gaussian kernel (checked once, then cached).
 *
 * @returns true when the binary validates and instantiates (WebAssembly with the SIMD proposal: Node ≥ 16.4,
 *   current Chrome, Firefox and Safari ≥ 16.4)
 */
export function wasmSimdAvailable(): boolean {
  return instance() !== null;
}

/**
 * Copies the frame into the module's memory (grown as needed, kept for later calls), runs `op` in place and copies
 * the result out. Undefined when the module is unavailable or its memory cannot hold the frame.
 */
function runInPlace(
  raster: Raster,
  sigmaPx: number,
  op: (k: KernelExports, frame: number, radius: number, scratch: number) => void,
): Raster | undefined {
  const half = gaussianHalfKernel(sigmaPx);
  const { width, height, data } = raster;
  const n = width * height;
  if (data.length < n) {
    throw new RangeError(`raster data holds ${data.length} values, fewer than width × height = ${n}`);
  }
  const k = instance();
  if (!k) return undefined;
  if (n === 0) return { data: new Float32Array(0), width, height };

  // layout: frame at the heap base, then the scratch whose first radius + 1 floats are the weights
  const radius = half.length - 1;
  const frame = k.heapBase() >>> 0;
  const scratch = frame + Math.ceil(n / 4) * 16;
  const end = scratch + (k.scratchBytes(width, radius) >>> 0);
  if (end > MAX_BYTES) return undefined;
  if (end > k.memory.buffer.byteLength) {
    try {
      k.memory.grow(Math.ceil((end - k.memory.buffer.byteLength) / PAGE_BYTES));
    } catch {
      return undefined; // the engine refused the memory: fall back rather than fail
    }
  }
  const buffer = k.memory.buffer; // after grow: the old buffer is detached
  new Float32Array(buffer, frame, n).set(data.length === n ? data : data.subarray(0, n));
  new Float32Array(buffer, scratch, radius + 1).set(half);
  op(k, frame, radius, scratch);
  return { data: new Float32Array(buffer, frame, n).slice(), width, height };
}

/**
 * Gaussian blur by the WebAssembly SIMD kernel: same kernel ({@link gaussianHalfKernel}) and edge rule (replicated)
 * as {@link blurRows}, float32 arithmetic.
 *
 * @param raster - input image (any unit); not modified
 * @param sigmaPx - Gaussian SD (px), > 0
 * @returns a new raster in the unit of the input, or undefined when the kernel cannot run here (see
 *   {@link wasmSimdAvailable}) or its memory cannot grow to the frame
 * @throws RangeError when sigmaPx is not a finite positive number or data is shorter than width × height
 */
export function gaussianBlurWasm(raster: Raster, sigmaPx: number): Raster | undefined {
  return runInPlace(raster, sigmaPx, (k, frame, radius, scratch) =>
    k.blur(frame, frame, raster.width, raster.height, radius, scratch),
  );
}

/**
 * factor·∇²(G_σ * I) by the WebAssembly SIMD kernel: blur as {@link gaussianBlurWasm}, then the 5-point Laplacian
 * with replicated edges, fused row by row so no blurred frame is stored. float32 arithmetic.
 *
 * @param raster - input image (counts); not modified
 * @param sigmaPx - scale σ (px), > 0
 * @param factor - multiplies the Laplacian (−σ² for the scale-normalised negative LoG)
 * @returns a new raster, or undefined when the kernel cannot run here or its memory cannot grow to the frame
 * @throws RangeError when sigmaPx is not a finite positive number or data is shorter than width × height
 */
export function laplacianOfGaussianWasm(raster: Raster, sigmaPx: number, factor: number): Raster | undefined {
  return runInPlace(raster, sigmaPx, (k, frame, radius, scratch) =>
    k.laplacianOfGaussian(frame, frame, raster.width, raster.height, radius, factor, scratch),
  );
}
