import { readFile } from 'node:fs/promises';
import { describe, expect, it } from 'vitest';
import {
  compileGaussianKernel,
  GAUSSIAN_KERNEL_MODULE,
  renderGaussianKernelModule,
} from '../../../../../scripts/lib/compileGaussianKernel';
import { GAUSSIAN_KERNEL_WASM_BASE64 } from '../wasm/gaussianKernelBinary';

describe('committed Gaussian kernel binary', () => {
  it('is exactly what `npm run build:wasm` makes from assembly/gaussian.ts', async () => {
    // provenance: recompiles the source with the build script's own function and flags (AssemblyScript from
    // package.json); a difference means the source changed without `npm run build:wasm`, or the module was edited
    const fresh = await compileGaussianKernel();
    const committed = Uint8Array.from(atob(GAUSSIAN_KERNEL_WASM_BASE64), (c) => c.charCodeAt(0));
    expect(Buffer.from(committed).equals(Buffer.from(fresh))).toBe(true);
    const text = await readFile(new URL(`../../../../../${GAUSSIAN_KERNEL_MODULE}`, import.meta.url), 'utf8');
    expect(text).toBe(renderGaussianKernelModule(fresh));
  }, 20_000);
});
