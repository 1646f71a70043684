/**
 * Analysis benchmark: `npm run bench` (a script, not a timed test).
 *
 * Generates the standard field deterministically (a 1024 × 1024 height map with 500 vesicles and 5 beads, three
 * 2048 × 2048 16-bit fluorescence channels), runs every stage several times and prints median and minimum wall time,
 * megapixels per second and sampled memory, then compares the stages OpenCV's JavaScript build also has
 * (@techstark/opencv-js 4.5.2, dev dependency; single-threaded wasm) and image-js 1.7 (16-bit blur, for the record).
 * Before each timed run the heap is collected and the script pauses SETTLE_MS so that freeing the previous run's
 * buffers is not billed to the stage.
 *
 * One core: the analysis runs on Node's main thread only; where `taskset` exists the script re-runs itself pinned to
 * one CPU so that V8's helper threads share that core too. BENCH_RUNS sets the repetitions (default 5),
 * BENCH_WARMUP the untimed calls before them (default 3).
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import os from 'node:os';
import { Image } from 'image-js';
import { median } from 'simple-statistics';
import {
  aperturePhotometry,
  correctBackground,
  detectSpots,
  gaussianBlur,
  laplacianOfGaussian,
  psfSigmaPx,
  renderFluorescenceScene,
} from '../src/lib/analysis/fluorescence';
import { detectVesicles, labelComponents, levelHeightMap, measureVesicle, selectThreshold } from '../src/lib/analysis/heightmap';
import { createRng, makeHeightScene } from '../src/lib/analysis/synthetic';
import type { Raster } from '../src/lib/analysis/types';

// one core
if (process.env.HL_BENCH_PINNED === undefined && process.platform === 'linux' && existsSync('/usr/bin/taskset')) {
  const cpu = String(os.cpus().length - 1);
  const child = spawnSync('/usr/bin/taskset', ['-c', cpu, process.execPath, ...process.execArgv, ...process.argv.slice(1)], {
    stdio: 'inherit',
    env: { ...process.env, HL_BENCH_PINNED: cpu },
  });
  process.exit(child.status ?? 1);
}

const RUNS = Math.max(1, Number(process.env.BENCH_RUNS ?? 5));
const WARMUP = Math.max(1, Number(process.env.BENCH_WARMUP ?? 3));
const MB = 1024 * 1024;
const gc = (globalThis as { gc?: () => void }).gc ?? (() => undefined);

// the standard field: every number below is part of its definition, change them only with a note in docs/benchmarks.md
const AFM_SIZE = 1024;
const AFM_PIXEL_NM = 10;
const FL_SIZE = 2048;
const FL_PIXEL_NM = 65;
const NA = 1.4;
const EMISSION_NM = [520, 590, 670];
const EMITTERS_PER_CHANNEL = 2000;
const CAMERA_OFFSET = 100;

interface Field {
  heights: Raster;
  channels: { raster: Raster; sigmaPx: number }[];
  photometryPoints: { x: number; y: number }[];
}

function makeStandardField(): Field {
  const scene = makeHeightScene({
    seed: 2024, width: AFM_SIZE, height: AFM_SIZE, pixelSizeNm: AFM_PIXEL_NM, nbVesicles: 500, nbBeads: 5, minGapPx: 6,
  });
  const rng = createRng(7);
  const channels = EMISSION_NM.map((emissionNm, c) => {
    const sigmaPx = psfSigmaPx(emissionNm, NA, FL_PIXEL_NM);
    const spots = Array.from({ length: EMITTERS_PER_CHANNEL }, () => ({
      x: 8 + rng.uniform() * (FL_SIZE - 16), y: 8 + rng.uniform() * (FL_SIZE - 16), photons: 300 + 2700 * rng.uniform(),
    }));
    const { raster } = renderFluorescenceScene({
      widthPx: FL_SIZE, heightPx: FL_SIZE, sigmaPx, spots, rng: createRng(100 + c), backgroundPhotonsPerPx: 100,
      backgroundSlopePerPx: { x: 0.01, y: -0.006 }, cameraOffsetCounts: CAMERA_OFFSET, quantise16Bit: true,
    });
    return { raster, sigmaPx };
  });
  // aperture positions: 500 places per channel, as many as vesicles mapped into the frame
  const photometryPoints = Array.from({ length: 500 }, () => ({ x: 20 + rng.uniform() * (FL_SIZE - 40), y: 20 + rng.uniform() * (FL_SIZE - 40) }));
  return { heights: scene.raster, channels, photometryPoints };
}

interface Row {
  stage: string;
  megapixels: number;
  times: number[];
  rssMb: number;
  heapMb: number;
  note?: string;
}

const rows: Row[] = [];

/**
 * After a forced collection V8 frees the large buffers of the previous run on helper threads, which share the one
 * pinned core: without a pause that work lands in whichever stage is timed next (a 16 ms stage then read 130 ms).
 */
const SETTLE_MS = 50;
const settle = () => new Promise<void>((resolve) => setTimeout(resolve, SETTLE_MS));

/** Times `fn` RUNS times after one warm-up, sampling memory right after each run (before collection). */
async function bench<T>(stage: string, megapixels: number, fn: () => T, note?: string): Promise<T> {
  // warm-up: JIT compilation is not part of a stage's steady cost. One call is not enough: V8 compiles each long
  // loop on its own (on-stack replacement) and drops that code when it reaches lines it has not run yet, so a stage
  // needs a few calls before its code stays optimised
  let result = fn();
  for (let w = 1; w < WARMUP; w++) result = fn();
  const times: number[] = [];
  let rssMb = 0;
  let heapMb = 0;
  for (let r = 0; r < RUNS; r++) {
    gc();
    await settle();
    const t0 = performance.now();
    result = fn();
    times.push(performance.now() - t0);
    const m = process.memoryUsage();
    rssMb = Math.max(rssMb, m.rss / MB);
    heapMb = Math.max(heapMb, (m.heapUsed + m.arrayBuffers) / MB);
  }
  rows.push({ stage, megapixels, times, rssMb, heapMb, note });
  process.stderr.write(`  ${stage}: ${median(times).toFixed(0)} ms\n`);
  return result;
}

const min = (xs: number[]) => Math.min(...xs);
const pad = (s: string, n: number) => (s.length >= n ? s : s + ' '.repeat(n - s.length));
const lpad = (s: string, n: number) => (s.length >= n ? s : ' '.repeat(n - s.length) + s);
const rowOf = (stage: string) => rows.find((r) => r.stage === stage)!;

function printTable(title: string, list: Row[]) {
  console.log(`\n${title}`);
  console.log(`| ${pad('stage', 46)} | median ms | min ms | MP/s (median) | RSS MB | heap+buffers MB |`);
  console.log(`|${'-'.repeat(48)}|----------:|-------:|--------------:|-------:|----------------:|`);
  for (const r of list) {
    const med = median(r.times);
    console.log(
      `| ${pad(r.stage, 46)} | ${lpad(med.toFixed(1), 9)} | ${lpad(min(r.times).toFixed(1), 6)} | ${lpad((r.megapixels / (med / 1000)).toFixed(1), 13)} | ${lpad(r.rssMb.toFixed(0), 6)} | ${lpad(r.heapMb.toFixed(0), 15)} |`,
    );
  }
}

/**
 * Loads OpenCV.js. The module is returned inside an object: it is a thenable that resolves to itself, so returning
 * it bare from an async function would never settle.
 */
async function loadOpenCv(): Promise<{ cv: any }> { // eslint-disable-line @typescript-eslint/no-explicit-any
  const require = createRequire(import.meta.url);
  const mod = require('@techstark/opencv-js');
  if (mod instanceof Promise) return { cv: await mod };
  if (!mod.Mat) {
    await new Promise<void>((resolve) => {
      mod.onRuntimeInitialized = () => resolve();
    });
  }
  return { cv: mod };
}

async function main() {
  const cpuModel = os.cpus()[0]?.model ?? 'unknown';
  console.log('Heightlight analysis benchmark');
  console.log(`machine: ${os.cpus().length} logical CPUs, ${cpuModel}, ${(os.totalmem() / 1024 ** 3).toFixed(0)} GiB; Node ${process.version}`);
  console.log(
    process.env.HL_BENCH_PINNED !== undefined
      ? `single-threaded: analysis on Node's main thread, process pinned to CPU ${process.env.HL_BENCH_PINNED} (taskset)`
      : "single-threaded: analysis on Node's main thread (taskset not available, process not pinned)",
  );
  console.log(`runs per stage: ${RUNS} after ${WARMUP} warm-up calls, each run after a collection and a ${SETTLE_MS} ms pause; load average now ${os.loadavg().map((l) => l.toFixed(2)).join(' ')}`);

  let t0 = performance.now();
  const field = makeStandardField();
  console.log(`standard field generated in ${(performance.now() - t0).toFixed(0)} ms (not timed below)`);
  const afmMp = (AFM_SIZE * AFM_SIZE) / 1e6;
  const flMp = (FL_SIZE * FL_SIZE) / 1e6;
  const fieldMp = afmMp + 3 * flMp;

  // the whole field as the pipeline runs it (lean fit), first so that its peak memory is its own
  await bench('WHOLE FIELD (height + 3 channels + photometry)', fieldMp, () => {
    const lev = levelHeightMap(field.heights);
    const th = selectThreshold(lev.levelled, { method: 'robust', k: 3, backgroundMask: lev.backgroundMask });
    const det = detectVesicles(lev.levelled, { thresholdNm: th.thresholdNm });
    const opts = { thresholdNm: Math.max(0, th.thresholdNm) };
    const measured = [...det.vesicles, ...det.fiducialCandidates].map((r) => measureVesicle(lev.levelled, det.labels, r, AFM_PIXEL_NM, opts));
    const found = field.channels.map((c) => {
      const bg = correctBackground(c.raster, { cameraOffsetCounts: CAMERA_OFFSET });
      const s = detectSpots(bg.corrected, { sigmaPx: c.sigmaPx, background: bg.background });
      const phot = field.photometryPoints.map((p) => aperturePhotometry(c.raster, p, { sigmaPx: c.sigmaPx }));
      return { s, phot };
    });
    return { measured, found };
  });
  const pipelinePeakRssMb = process.resourceUsage().maxRSS / 1024;

  // height map stages
  const levelling = await bench('height: level (plane + rows)', afmMp, () => levelHeightMap(field.heights));
  const threshold = await bench('height: threshold (robust)', afmMp, () =>
    selectThreshold(levelling.levelled, { method: 'robust', k: 3, backgroundMask: levelling.backgroundMask }),
  );
  const detection = await bench('height: detect (watershed + stats)', afmMp, () =>
    detectVesicles(levelling.levelled, { thresholdNm: threshold.thresholdNm }),
  );
  const measureOptions = { thresholdNm: Math.max(0, threshold.thresholdNm) };
  await bench(`height: measure ${detection.vesicles.length + detection.fiducialCandidates.length} regions`, afmMp, () =>
    [...detection.vesicles, ...detection.fiducialCandidates].map((r) =>
      measureVesicle(levelling.levelled, detection.labels, r, AFM_PIXEL_NM, measureOptions),
    ),
  );

  // fluorescence stages, all three channels per run
  const corrected = await bench('fluor ×3: background', 3 * flMp, () =>
    field.channels.map((c) => correctBackground(c.raster, { cameraOffsetCounts: CAMERA_OFFSET })),
  );
  await bench('fluor ×3: LoG only (part of detect)', 3 * flMp, () =>
    field.channels.map((c, i) => laplacianOfGaussian(corrected[i].corrected, c.sigmaPx)),
  );
  const spots = await bench('fluor ×3: detect + lean Gaussian fit', 3 * flMp, () =>
    field.channels.map((c, i) => detectSpots(corrected[i].corrected, { sigmaPx: c.sigmaPx, background: corrected[i].background })),
  );
  const spotsLm = await bench('fluor ×3: detect + ml-levenberg-marquardt fit', 3 * flMp, () =>
    field.channels.map((c, i) =>
      detectSpots(corrected[i].corrected, { sigmaPx: c.sigmaPx, background: corrected[i].background, solver: 'ml-levenberg-marquardt' }),
    ),
  );
  await bench('fluor ×3: detect + centroid only', 3 * flMp, () =>
    field.channels.map((c, i) => detectSpots(corrected[i].corrected, { sigmaPx: c.sigmaPx, refine: 'centroid' })),
  );
  await bench('fluor ×3: aperture photometry, 500 points', 3 * flMp, () =>
    field.channels.map((c) => field.photometryPoints.map((p) => aperturePhotometry(c.raster, p, { sigmaPx: c.sigmaPx }))),
  );


  // fit agreement: the lean solver against ml-levenberg-marquardt on the same candidates
  const shifts: number[] = [];
  const relTotals: number[] = [];
  spots.forEach((r, c) => {
    const other = spotsLm[c].spots;
    r.spots.forEach((s, k) => {
      const o = other[k];
      if (!s.fitted || !o.fitted) return;
      shifts.push(Math.hypot(s.x - o.x, s.y - o.y));
      relTotals.push(Math.abs(s.integratedCounts / o.integratedCounts - 1));
    });
  });
  const quantile = (xs: number[], q: number) => [...xs].sort((a, b) => a - b)[Math.min(xs.length - 1, Math.floor(q * xs.length))];

  // comparisons with OpenCV's JavaScript build and image-js
  t0 = performance.now();
  const { cv } = await loadOpenCv();
  console.log(`OpenCV.js loaded in ${(performance.now() - t0).toFixed(0)} ms (${cv.getBuildInformation().match(/Version control:\s*(\S+)/)?.[1] ?? 'version ?'}, not timed below)`);
  const sigma = field.channels[1].sigmaPx;
  const ksize = 2 * Math.max(1, Math.ceil(3 * sigma)) + 1; // our kernel's support: ±3σ
  const flFloat = corrected[1].corrected;
  // the pipeline's path (WebAssembly SIMD; copy in, copy out and a fresh result included), then the JavaScript fallback
  const ours = await bench(`blur 2048² float32, σ=${sigma.toFixed(2)} px: ours`, flMp, () => gaussianBlur(flFloat, sigma));
  await bench(`blur 2048² float32: ours, JavaScript fallback (no WebAssembly)`, flMp, () => gaussianBlur(flFloat, sigma, { implementation: 'js' }));
  const src = cv.matFromArray(FL_SIZE, FL_SIZE, cv.CV_32F, flFloat.data);
  const dst = new cv.Mat();
  const size = new cv.Size(ksize, ksize);
  await bench(`blur 2048² float32: cv.GaussianBlur ${ksize}×${ksize}`, flMp, () => cv.GaussianBlur(src, dst, size, sigma, sigma, cv.BORDER_REPLICATE));
  const cvBlur = dst.data32F as Float32Array;
  let blurDiff = 0;
  for (let i = 0; i < cvBlur.length; i++) blurDiff = Math.max(blurDiff, Math.abs(cvBlur[i] - ours.data[i]));
  const img16 = new Image(FL_SIZE, FL_SIZE, { bitDepth: 16, colorModel: 'GREY', data: Uint16Array.from(field.channels[1].raster.data) });
  await bench(`blur 2048² uint16: image-js gaussianBlur ${ksize}×${ksize}`, flMp, () =>
    img16.gaussianBlur({ sigma, size: ksize, borderType: 'replicate' }),
  );

  const mask = new cv.Mat(AFM_SIZE, AFM_SIZE, cv.CV_8U);
  const maskData = mask.data as Uint8Array;
  const lev = levelling.levelled.data;
  for (let i = 0; i < maskData.length; i++) maskData[i] = lev[i] > threshold.thresholdNm ? 1 : 0;
  const labels = new cv.Mat();
  const stats = new cv.Mat();
  const centroids = new cv.Mat();
  const nbCv = await bench('components 1024² mask: cv.connectedComponentsWithStats', afmMp, () =>
    cv.connectedComponentsWithStats(mask, labels, stats, centroids, 8, cv.CV_32S),
  ) as number;
  // the same mask into our labelling (the first step of detectVesicles), labels into one reused array as OpenCV reuses its Mat
  const ourLabels = new Int32Array(AFM_SIZE * AFM_SIZE);
  const ourCc = await bench('components 1024² mask: ours (labelComponents)', afmMp, () => labelComponents(maskData, AFM_SIZE, AFM_SIZE, 8, ourLabels)) as ReturnType<typeof labelComponents>;
  const detectRow = rowOf('height: detect (watershed + stats)');
  for (const m of [src, dst, mask, labels, stats, centroids]) m.delete();

  // report
  const heightRows = rows.filter((r) => r.stage.startsWith('height'));
  const flRows = rows.filter((r) => r.stage.startsWith('fluor'));
  printTable('Stages of the standard field', [...heightRows, ...flRows, rowOf('WHOLE FIELD (height + 3 channels + photometry)')]);
  printTable('Shared stages: ours vs OpenCV.js (and image-js for the record)', rows.filter((r) => r.stage.startsWith('blur') || r.stage.startsWith('components')));
  const nbOurComponents = detection.diagnostics.nbRegions - detection.diagnostics.nbSplits;
  console.log(`\nchecks: blur max |ours − OpenCV| = ${blurDiff.toExponential(2)} counts on values up to ~${Math.max(...flFloat.data.subarray(0, 1 << 16)).toFixed(0)}`);
  console.log(`        components: OpenCV ${nbCv - 1}, labelComponents ${ourCc.nbComponents} (background excluded); detectVesicles ${nbOurComponents} before the watershed split (${detection.diagnostics.nbRegions} basins)`);
  console.log(`        spots: ${spots.map((r) => r.spots.length).join(' / ')} per channel, ${spots.map((r) => r.nbFitted).join(' / ')} fitted;`);
  console.log(`        lean vs ml-levenberg-marquardt on ${shifts.length} spots fitted by both: centre difference median ${quantile(shifts, 0.5).toExponential(1)} px, 99th pct ${quantile(shifts, 0.99).toExponential(1)} px, max ${quantile(shifts, 1).toFixed(2)} px; integrated counts median ${(100 * quantile(relTotals, 0.5)).toFixed(3)} %, 99th pct ${(100 * quantile(relTotals, 0.99)).toFixed(2)} %`);

  // targets
  const whole = rowOf('WHOLE FIELD (height + 3 channels + photometry)');
  const verdict = (ok: boolean) => (ok ? 'PASS' : 'MISS');
  const wholeMed = median(whole.times);
  const blurOurs = median(rowOf(`blur 2048² float32, σ=${sigma.toFixed(2)} px: ours`).times);
  const blurCv = median(rowOf(`blur 2048² float32: cv.GaussianBlur ${ksize}×${ksize}`).times);
  const ccOurs = median(rowOf('components 1024² mask: ours (labelComponents)').times);
  const ccCv = median(rowOf('components 1024² mask: cv.connectedComponentsWithStats').times);
  console.log('\nTargets');
  console.log(`  ${verdict(wholeMed < 1000)} whole field < 1000 ms on one core: median ${wholeMed.toFixed(0)} ms, min ${min(whole.times).toFixed(0)} ms`);
  console.log(`  ${verdict(pipelinePeakRssMb < 400)} peak memory < 400 MB: peak RSS ${pipelinePeakRssMb.toFixed(0)} MB (process maxRSS before OpenCV is loaded, scene included)`);
  console.log(`  ${verdict(blurOurs <= blurCv)} Gaussian blur not slower than OpenCV.js: ours ${blurOurs.toFixed(1)} ms vs ${blurCv.toFixed(1)} ms (median)`);
  console.log(`  ${verdict(ccOurs <= ccCv)} connected components not slower than OpenCV.js: ours ${ccOurs.toFixed(1)} ms vs ${ccCv.toFixed(1)} ms (median); detectVesicles with its watershed ${median(detectRow.times).toFixed(1)} ms`);
}

await main();
