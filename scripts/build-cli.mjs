// Bundles the command line (scripts/analyze.ts) and the job worker (scripts/worker.ts) into plain JavaScript in
// build/cli/ with esbuild, so that a start loads one file and transpiles no TypeScript. `node scripts/build-cli.mjs`
// builds both (npm run build:cli); scripts/run-bundled.mjs calls ensureBundle() and rebuilds only when a source
// listed in the bundle's metafile is newer than the bundle. Plain JavaScript so that it runs without a loader.
import { mkdir, readFile, rename, stat, writeFile } from 'node:fs/promises';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
export const OUT_DIR = join(root, 'build', 'cli');

/**
 * The bundles. The command line takes its packages in (one file to load); the worker keeps node_modules external
 * (sharp is native, pg-boss and the AWS SDK load their own files), so only our TypeScript is precompiled.
 */
const BUNDLES = {
  analyze: { entry: 'scripts/analyze.ts' },
  worker: { entry: 'scripts/worker.ts', packagesExternal: true },
};

/** Entries started by path at run time, built beside every bundle (decodeInWorker starts its threads on decodeThread.mjs). */
const THREAD_ENTRIES = ['src/lib/imaging/decodeThread.ts'];

/** Build one bundle and its metafile (the list of inputs, for the staleness check). */
export async function buildBundle(name) {
  const spec = BUNDLES[name];
  if (!spec) throw new Error(`unknown bundle "${name}"; known: ${Object.keys(BUNDLES).join(', ')}`);
  const { build } = await import('esbuild');
  await mkdir(OUT_DIR, { recursive: true });
  const result = await build({
    absWorkingDir: root,
    entryPoints: { [name]: spec.entry, ...Object.fromEntries(THREAD_ENTRIES.map((e) => [e.split('/').pop().replace(/\.ts$/, ''), e])) },
    outdir: OUT_DIR,
    outExtension: { '.js': '.mjs' },
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    packages: spec.packagesExternal ? 'external' : undefined,
    sourcemap: 'linked',
    metafile: true,
    write: false,
    logLevel: 'warning',
    // bundled CommonJS packages call require() for Node's own modules; ESM output has none unless we make one
    banner: { js: "import { createRequire as __hlCreateRequire } from 'node:module'; const require = __hlCreateRequire(import.meta.url);" },
  });
  // each file written beside its place and renamed over it: a process starting meanwhile reads the old or the new file, whole
  const written = [
    ...result.outputFiles.map((o) => ({ path: o.path, bytes: o.contents })),
    { path: join(OUT_DIR, `${name}.meta.json`), bytes: JSON.stringify(result.metafile) },
  ];
  for (const { path, bytes } of written) {
    const temporary = `${path}.${process.pid}.tmp`;
    await writeFile(temporary, bytes);
    await rename(temporary, path);
  }
}

/** True when the bundle is missing or one of its own sources (not node_modules) changed after it was built. */
export async function isStale(name) {
  let built;
  let meta;
  try {
    built = (await stat(join(OUT_DIR, `${name}.mjs`))).mtimeMs;
    meta = JSON.parse(await readFile(join(OUT_DIR, `${name}.meta.json`), 'utf8'));
  } catch {
    return true;
  }
  const sources = [...Object.keys(meta.inputs).filter((p) => !p.includes('node_modules/')), 'package-lock.json'];
  const times = await Promise.all(sources.map((p) => stat(join(root, p)).then((s) => s.mtimeMs, () => Infinity)));
  return times.some((t) => t > built);
}

/** Build the bundle when stale; returns its path. */
export async function ensureBundle(name) {
  if (await isStale(name)) await buildBundle(name);
  return join(OUT_DIR, `${name}.mjs`);
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const names = process.argv.slice(2).length ? process.argv.slice(2) : Object.keys(BUNDLES);
  for (const name of names) await buildBundle(name);
  process.stderr.write(`[build-cli] ${names.join(', ')} → ${OUT_DIR}\n`);
}
