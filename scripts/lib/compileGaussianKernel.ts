/**
 * Compiles assembly/gaussian.ts (the SIMD Gaussian and LoG kernel) with AssemblyScript's programmatic API, in memory.
 * Shared by `npm run build:wasm` (scripts/build-wasm.ts), which writes the result into the source tree, and by the
 * provenance test, which checks that the committed binary is exactly what this source and these flags produce.
 */
import { fileURLToPath } from 'node:url';
import asc from 'assemblyscript/asc';

/** Repository root, the base directory for asc's paths. */
const ROOT = fileURLToPath(new URL('../..', import.meta.url));

/** Kernel source, relative to the repository root. */
export const GAUSSIAN_KERNEL_SOURCE = 'assembly/gaussian.ts';

/** Path of the generated module that carries the binary, relative to the repository root. */
export const GAUSSIAN_KERNEL_MODULE = 'src/lib/analysis/fluorescence/wasm/gaussianKernelBinary.ts';

/**
 * Fixed compiler flags. -O3: speed over size. stub runtime: the kernel allocates nothing, the caller places all data.
 * `--use abort=` drops the abort import, so the module instantiates with no imports at all; --noAssert: no traps.
 */
export const GAUSSIAN_KERNEL_FLAGS = [
  '-O3', '--runtime', 'stub', '--enable', 'simd', '--use', 'abort=', '--noAssert',
] as const;

/**
 * Compiles the kernel and returns the wasm bytes.
 *
 * @returns the binary, as asc emits it for {@link GAUSSIAN_KERNEL_FLAGS}
 * @throws Error with asc's diagnostics when compilation fails
 */
export async function compileGaussianKernel(): Promise<Uint8Array> {
  let binary: Uint8Array | undefined;
  const stderr = asc.createMemoryStream();
  const { error } = await asc.main(
    [GAUSSIAN_KERNEL_SOURCE, ...GAUSSIAN_KERNEL_FLAGS, '--outFile', 'gaussian.wasm', '--baseDir', ROOT],
    {
      stderr,
      writeFile: (name, contents) => {
        if (name.endsWith('.wasm') && typeof contents !== 'string') binary = contents;
      },
    },
  );
  if (error || !binary) {
    throw new Error(`asc failed to compile ${GAUSSIAN_KERNEL_SOURCE}: ${error?.message ?? 'no output'}\n${stderr}`);
  }
  return binary;
}

/** asc's version, recorded in the generated module's header. */
export const ASC_VERSION = asc.version;

/**
 * Text of the generated TypeScript module: a header saying how it was made, and the binary as base64.
 *
 * @param binary - the wasm bytes from {@link compileGaussianKernel}
 */
export function renderGaussianKernelModule(binary: Uint8Array): string {
  const base64 = Buffer.from(binary).toString('base64');
  const lines = base64.match(/.{1,100}/g) ?? [];
  return [
    '// GENERATED FILE, DO NOT EDIT. Regenerate with `npm run build:wasm` (scripts/build-wasm.ts).',
    `// Source: ${GAUSSIAN_KERNEL_SOURCE}; AssemblyScript ${ASC_VERSION} (asc ${GAUSSIAN_KERNEL_FLAGS.join(' ')}).`,
    `// ${binary.length} bytes of WebAssembly (SIMD), base64 so that neither the server nor the browser needs asc.`,
    '',
    '/** The compiled Gaussian/LoG kernel, base64-encoded WebAssembly. */',
    'export const GAUSSIAN_KERNEL_WASM_BASE64 =',
    lines.map((l) => `  '${l}'`).join(' +\n') + ';',
    '',
  ].join('\n');
}
