/**
 * `npm run build:wasm`: compiles assembly/gaussian.ts and writes the binary, base64-encoded, into
 * src/lib/analysis/fluorescence/wasm/gaussianKernelBinary.ts (checked in, so running or building the app needs no asc).
 * Run it after changing the kernel source; a unit test fails while the committed binary is stale.
 */
import { writeFile } from 'node:fs/promises';
import { fileURLToPath } from 'node:url';
import {
  compileGaussianKernel,
  GAUSSIAN_KERNEL_MODULE,
  GAUSSIAN_KERNEL_SOURCE,
  renderGaussianKernelModule,
} from './lib/compileGaussianKernel';

const binary = await compileGaussianKernel();
await writeFile(fileURLToPath(new URL(`../${GAUSSIAN_KERNEL_MODULE}`, import.meta.url)), renderGaussianKernelModule(binary));
console.log(`${GAUSSIAN_KERNEL_SOURCE} → ${GAUSSIAN_KERNEL_MODULE} (${binary.length} bytes of wasm)`);
