/**
 * Cold-path benchmark: `npm run bench:cold` (a script, not a timed test). What a user meets, beside the warm figures
 * of `npm run bench`:
 * - cold: `npm run analyze` as a new process per field, whole wall time, median of BENCH_COLD_RUNS (default 5);
 *   also the same without npm's own start (`node scripts/run-bundled.mjs analyze`), and the peak RSS of each process;
 * - batch: `npm run analyze -- --batch` over BENCH_BATCH_FIELDS (default 20) fields in one process, wall time per field;
 * - warm: the same field analysed in this process after one untimed call (median of 5);
 * - worker: BENCH_WORKER_FIELDS (default 10) fields one after another in a fresh process, without and with the
 *   worker's start-up warm-up (scripts/lib/workerFieldTimes.ts), first field against the last.
 * The field (issue 16): a 2048 × 2048 height map at 10 nm/px with ~600 vesicles and 8 beads, three 1024 × 1024
 * 16-bit fluorescence channels at 65 nm/px, hand-placed fiducials on the beads. Files are written once to a temporary
 * folder (not timed). Prints the date, the machine and its load average before and after, since a shared machine's
 * load changes every figure. Checks that the three paths wrote the same bytes.
 */
import { spawnSync } from 'node:child_process';
import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import os from 'node:os';
import { join } from 'node:path';
import { median } from 'simple-statistics';
import { psfSigmaPx, renderFluorescenceScene } from '../src/lib/analysis/fluorescence';
import { createRng, makeHeightScene } from '../src/lib/analysis/synthetic';
import { writeTiff } from '../src/lib/imaging/writeTiff';
import { analyzeFieldFiles } from './lib/analyzeFieldFiles';

const COLD_RUNS = Math.max(1, Number(process.env.BENCH_COLD_RUNS ?? 5));
const BATCH_FIELDS = Math.max(1, Number(process.env.BENCH_BATCH_FIELDS ?? 20));
const WORKER_FIELDS = Math.max(2, Number(process.env.BENCH_WORKER_FIELDS ?? 10));
const AFM_SIZE = 2048;
const AFM_PIXEL_NM = 10;
const FL_SIZE = 1024;
const FL_PIXEL_NM = 65;
const NA = 1.4;
const EMISSION_NM = [520, 590, 670];
const MARKERS = ['CD9', 'CD63', 'CD81'];
const perCm = (nm: number) => 1e7 / nm;

/** flFromAfm: AFM px → fluorescence px, a small rotation, the AFM field in the middle of the frame. */
const ROT = (4 * Math.PI) / 180;
const SCALE = AFM_PIXEL_NM / FL_PIXEL_NM;
const toFl = (x: number, y: number) => ({
  x: SCALE * (Math.cos(ROT) * x - Math.sin(ROT) * y) + 350,
  y: SCALE * (Math.sin(ROT) * x + Math.cos(ROT) * y) + 330,
});

async function writeField(dir: string): Promise<number> {
  const scene = makeHeightScene({ seed: 16, width: AFM_SIZE, height: AFM_SIZE, pixelSizeNm: AFM_PIXEL_NM, nbVesicles: 600, nbBeads: 8, beadHeightNm: 150, minGapPx: 5 });
  const vesicles = scene.truth.filter((t) => t.kind === 'vesicle');
  const beads = scene.truth.filter((t) => t.kind === 'bead');
  const rng = createRng(5);
  const labelled = MARKERS.map(() => vesicles.map(() => rng.uniform() < 0.4));
  const others = Array.from({ length: 1500 }, () => ({ x: 8 + rng.uniform() * (FL_SIZE - 16), y: 8 + rng.uniform() * (FL_SIZE - 16) }));
  const pages = EMISSION_NM.map((emissionNm, c) => {
    const spots = [
      ...vesicles.flatMap((v, i) => (labelled[c][i] ? [{ ...toFl(v.xPx, v.yPx), photons: 300 + 1700 * rng.uniform() }] : [])),
      ...beads.map((b) => ({ ...toFl(b.xPx, b.yPx), photons: 20000 })),
      ...others.map((p) => ({ ...p, photons: 300 + 1700 * rng.uniform() })),
    ];
    const { raster } = renderFluorescenceScene({
      widthPx: FL_SIZE, heightPx: FL_SIZE, sigmaPx: 1.15 * psfSigmaPx(emissionNm, NA, FL_PIXEL_NM), spots, rng: createRng(50 + c),
      backgroundPhotonsPerPx: 100, backgroundSlopePerPx: { x: 0.01, y: -0.006 }, cameraOffsetCounts: 100, quantise16Bit: true,
    });
    return { data: raster.data, width: FL_SIZE, height: FL_SIZE };
  });
  await writeFile(join(dir, 'topo.tif'), writeTiff([{ data: scene.raster.data, width: AFM_SIZE, height: AFM_SIZE }], {
    bitsPerSample: 32, sampleFormat: 'float', resolution: { x: perCm(AFM_PIXEL_NM), y: perCm(AFM_PIXEL_NM), unit: 'centimetre' },
  }));
  await writeFile(join(dir, 'stack.tif'), writeTiff(pages, {
    bitsPerSample: 16, sampleFormat: 'uint', resolution: { x: perCm(FL_PIXEL_NM), y: perCm(FL_PIXEL_NM), unit: 'centimetre' },
  }));
  const pairs = beads.map((b) => {
    const q = toFl(b.xPx, b.yPx);
    return `${b.xPx.toFixed(2)},${b.yPx.toFixed(2)},${q.x.toFixed(2)},${q.y.toFixed(2)}`;
  });
  await writeFile(join(dir, 'pairs.csv'), `afm_x,afm_y,fluor_x,fluor_y\n${pairs.join('\n')}\n`);
  const rows = Array.from({ length: BATCH_FIELDS }, (_, i) => `f${String(i + 1).padStart(2, '0')},topo.tif,stack.tif,pairs.csv`);
  await writeFile(join(dir, 'fields.csv'), `field,topography,fluorescence,fiducials\n${rows.join('\n')}\n`);
  return vesicles.length;
}

const FLAGS = ['--markers', MARKERS.join(','), '--emission-nm', EMISSION_NM.join(','), '--tip-radius', '8'];

/** One child process under /usr/bin/time: wall ms (measured here) and peak RSS (MB, from time's %M in KiB). */
function timed(command: string, args: string[], cwd: string): { ms: number; rssMb: number; stderr: string } {
  const t = performance.now();
  const r = spawnSync('/usr/bin/time', ['-f', 'HL_MAXRSS_KB=%M', command, ...args], { cwd, encoding: 'utf8', env: { ...process.env, INIT_CWD: cwd } });
  const ms = performance.now() - t;
  if (r.status !== 0) throw new Error(`${command} ${args.join(' ')} exited ${r.status}:\n${r.stderr}`);
  const kb = Number(/HL_MAXRSS_KB=(\d+)/.exec(r.stderr)?.[1] ?? NaN);
  return { ms, rssMb: kb / 1024, stderr: r.stderr };
}

const load = () => os.loadavg().map((l) => l.toFixed(2)).join(' ');

async function main() {
  const root = process.cwd();
  // BENCH_FIELD_DIR=<folder>: only write the field there (for profiling a single run by hand), then stop.
  if (process.env.BENCH_FIELD_DIR) {
    console.log(`${await writeField(process.env.BENCH_FIELD_DIR)} vesicles written to ${process.env.BENCH_FIELD_DIR}`);
    return;
  }
  const dir = await mkdtemp(join(os.tmpdir(), 'hl-bench-cold-'));
  try {
    console.log('Heightlight cold-path benchmark (npm run bench:cold)');
    console.log(`date: ${new Date().toISOString()}`);
    console.log(`machine: ${os.cpus().length} logical CPUs, ${os.cpus()[0]?.model ?? '?'}, ${(os.totalmem() / 1024 ** 3).toFixed(0)} GiB; Node ${process.version}`);
    console.log(`load average at start (1, 5, 15 min): ${load()}`);
    const nbVesicles = await writeField(dir);
    console.log(`field: ${AFM_SIZE}² height map, ${nbVesicles} vesicles, 3 × ${FL_SIZE}² channels (written to ${dir}, not timed)`);
    // the bundle is built before timing (npm run analyze rebuilds it only after a source change)
    timed(process.execPath, ['scripts/build-cli.mjs', 'analyze'], root);
    const args = ['--topography', join(dir, 'topo.tif'), '--fluorescence', join(dir, 'stack.tif'), '--fiducials', join(dir, 'pairs.csv'), ...FLAGS];

    // cold
    const cold = [];
    const coldNode = [];
    for (let i = 0; i < COLD_RUNS; i++) {
      cold.push(timed('npm', ['run', '--silent', 'analyze', '--', ...args, '--out', join(dir, `cold-${i}.csv`)], root));
      coldNode.push(timed(process.execPath, ['scripts/run-bundled.mjs', 'analyze', ...args, '--out', join(dir, `node-${i}.csv`)], root));
    }
    const stagesOf = (stderr: string) => `read ${/\((\d+) ms\)\n/.exec(stderr)?.[1] ?? '?'}, ` +
      [...stderr.matchAll(/\[analyze\] (\w+)\s+(\d+) ms/g)].map((m) => `${m[1]} ${m[2]}`).join(', ');

    // batch
    const batch = timed('npm', ['run', '--silent', 'analyze', '--', '--batch', join(dir, 'fields.csv'), '--out-dir', join(dir, 'batch'), ...FLAGS], root);

    // warm: this process, after one untimed call
    const files = { name: 'warm', topography: join(dir, 'topo.tif'), fluorescence: [join(dir, 'stack.tif')], fiducials: join(dir, 'pairs.csv') };
    const settings = { markers: MARKERS, emissionNmGiven: EMISSION_NM, numericalAperture: NA, thresholdCountsByMarker: {}, tipRadiusNm: 8 };
    let warmCsv = (await analyzeFieldFiles(files, settings, () => undefined)).csv;
    const warm: number[] = [];
    for (let i = 0; i < 5; i++) {
      const t = performance.now();
      warmCsv = (await analyzeFieldFiles(files, settings, () => undefined)).csv;
      warm.push(performance.now() - t);
    }

    // worker: first against tenth field of a fresh process, without and with the worker's warm-up
    const workerRuns = (['none', 'warm-up'] as const).map((mode) => {
      const r = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/lib/workerFieldTimes.ts', dir, String(WORKER_FIELDS), mode], { cwd: root, encoding: 'utf8' });
      if (r.status !== 0) throw new Error(`workerFieldTimes ${mode} exited ${r.status}:\n${r.stderr}`);
      return { mode, ...(JSON.parse(r.stdout.trim().split('\n').at(-1)!) as { warmUpMs: number; fieldMs: number[] }) };
    });

    // same bytes on every path
    // (a source edited while the benchmark runs rebuilds the bundle between runs, and then the bytes may differ)
    const coldCsv = await readFile(join(dir, 'cold-0.csv'), 'utf8');
    const others: [string, string][] = [
      ['cold without npm', await readFile(join(dir, 'node-0.csv'), 'utf8')],
      ...await Promise.all(cold.slice(1).map(async (_, i): Promise<[string, string]> => [`cold run ${i + 2}`, await readFile(join(dir, `cold-${i + 1}.csv`), 'utf8')])),
      ['batch first field', await readFile(join(dir, 'batch/f01.csv'), 'utf8')],
      ['batch last field', await readFile(join(dir, `batch/f${String(BATCH_FIELDS).padStart(2, '0')}.csv`), 'utf8')],
      ['warm', warmCsv],
    ];
    const differing = others.filter(([, text]) => text !== coldCsv).map(([name]) => name);

    const med = (xs: number[]) => median(xs);
    console.log('\n| path | wall per field (median) | min | peak RSS |');
    console.log('|---|---:|---:|---:|');
    console.log(`| cold: \`npm run analyze\`, one process (${COLD_RUNS} runs) | ${med(cold.map((r) => r.ms)).toFixed(0)} ms | ${Math.min(...cold.map((r) => r.ms)).toFixed(0)} ms | ${Math.max(...cold.map((r) => r.rssMb)).toFixed(0)} MB |`);
    console.log(`| cold without npm: \`node scripts/run-bundled.mjs analyze\` (${COLD_RUNS} runs) | ${med(coldNode.map((r) => r.ms)).toFixed(0)} ms | ${Math.min(...coldNode.map((r) => r.ms)).toFixed(0)} ms | ${Math.max(...coldNode.map((r) => r.rssMb)).toFixed(0)} MB |`);
    console.log(`| batch: ${BATCH_FIELDS} fields in one \`npm run analyze -- --batch\` | ${(batch.ms / BATCH_FIELDS).toFixed(0)} ms (total ${(batch.ms / 1000).toFixed(1)} s) | | ${batch.rssMb.toFixed(0)} MB |`);
    console.log(`| warm: in-process, after one call (5 runs) | ${med(warm).toFixed(0)} ms | ${Math.min(...warm).toFixed(0)} ms | ${(process.resourceUsage().maxRSS / 1024).toFixed(0)} MB (this process) |`);
    console.log(`\nworker-like process, ${WORKER_FIELDS} fields one after another (ms per field):`);
    for (const w of workerRuns) {
      const ratio = w.fieldMs[0] / w.fieldMs[w.fieldMs.length - 1];
      console.log(`  ${w.mode === 'none' ? 'no warm-up' : `warm-up first (${w.warmUpMs.toFixed(0)} ms, as the worker starts)`}: ` +
        `${w.fieldMs.map((ms) => ms.toFixed(0)).join(', ')}; first / last = ${ratio.toFixed(2)}`);
    }
    console.log('\nstages of each cold run (ms):');
    for (const [i, r] of cold.entries()) console.log(`  run ${i + 1} (${(r.ms / 1000).toFixed(1)} s): ${stagesOf(r.stderr)}`);
    console.log(`same CSV bytes as the first cold run: ${differing.length === 0 ? 'every path' : `NO for ${differing.join(', ')}`}`);
    console.log(`load average at end (1, 5, 15 min): ${load()}`);
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}

main().catch((error: unknown) => {
  console.error(error);
  process.exitCode = 1;
});
