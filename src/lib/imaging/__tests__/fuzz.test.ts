// Mutation fuzzing of the TIFF reader. Every mutated file must either decode or be rejected with an
// ImagingError: any other error type fails the test with its seed. Times are printed, not asserted: a case
// that hangs runs into the worker's own time limit (a 'timeout' failure) or the test's time-out.
// FUZZ_CASES=50000 (50,000 in process, 25,000 through the worker) npx vitest run --project unit src/lib/imaging/__tests__/fuzz.test.ts  for a long run
// (vitest.config.ts reads FUZZ_CASES and provides it as `fuzzCases`: src/ reads no environment outside src/lib/config.ts).
import { describe, expect, inject, it } from 'vitest';
import { decodeInWorker, decodeThreadStats } from '../decodeInWorker';
import { JOB_DECODE_OPTIONS, jobDecodeLimits } from '../../jobs/decodeStoredFile';
import { decodeTiff } from '../decodeTiff';
import { ImagingError } from '../errors';
import { inspectTiff } from '../inspectTiff';
import { baseFiles, mutate, prng } from './fuzzCases';

const NB_CASES = inject('fuzzCases');
// the long mode scales both counts; the normal run keeps at least 2,000 through the job's worker path
const NB_WORKER_CASES = Math.max(2000, Math.round(NB_CASES / 2));
// the long mode runs past vitest's 60 s default: allow ~10 ms a case (measured: ~1 ms in process, ~2 ms through the worker)
const testTimeout = (n: number) => Math.max(60_000, n * 10);

describe('fuzz: mutated TIFF files decode or fail with ImagingError only', () => {
  const bases = baseFiles();

  it(`${NB_CASES} in-process cases (inspectTiff + decodeTiff)`, async () => {
    const failures: string[] = [];
    const outcomes: Record<string, number> = {};
    let slowestMs = 0;
    const t0 = performance.now();
    for (let c = 0; c < NB_CASES; c++) {
      const seed = 1000 + c;
      const { file, steps } = mutate(bases[c % bases.length], seed);
      const start = performance.now();
      try {
        inspectTiff(file);
      } catch (err) {
        if (!(err instanceof ImagingError)) failures.push(`seed ${seed} [${steps}] inspectTiff threw ${String(err)}`);
      }
      try {
        await decodeTiff(file);
        outcomes.decoded = (outcomes.decoded ?? 0) + 1;
      } catch (err) {
        if (err instanceof ImagingError) outcomes[err.code] = (outcomes[err.code] ?? 0) + 1;
        else failures.push(`seed ${seed} [${steps}] decodeTiff threw ${String(err)}`);
      }
      slowestMs = Math.max(slowestMs, performance.now() - start);
    }
    const totalMs = performance.now() - t0;
    console.info(`fuzz: ${NB_CASES} cases in ${(totalMs / 1000).toFixed(1)} s, slowest ${slowestMs.toFixed(0)} ms, outcomes ${JSON.stringify(outcomes)}`);
    expect(failures).toEqual([]);
    // the mutators must exercise both paths, or the test proves nothing
    expect(outcomes.decoded ?? 0).toBeGreaterThan(NB_CASES * 0.05);
    expect(Object.keys(outcomes).length).toBeGreaterThanOrEqual(5);
  }, testTimeout(NB_CASES));

  // The ingestion and linking jobs' decode call (src/lib/jobs/decodeStoredFile.ts), without the bucket fetch.
  const JOB_LIMITS = jobDecodeLimits();
  const JOB_OPTIONS = JOB_DECODE_OPTIONS;

  it(`${NB_WORKER_CASES} cases through the ingestion job's decodeInWorker call`, async () => {
    const failures: string[] = [];
    const outcomes: Record<string, number> = {};
    let slowestMs = 0;
    const threads0 = decodeThreadStats().started;
    const t0 = performance.now();
    for (let k = 0; k < NB_WORKER_CASES; k++) {
      const seed = 2_000_000 + k;
      const { file, steps } = mutate(bases[k % bases.length], seed);
      const tag = `seed ${seed} [${steps}]`;
      const start = performance.now();
      const got = await decodeInWorker(file, JOB_LIMITS, JOB_OPTIONS).then((r) => ({ ok: true as const, r }), (e: unknown) => ({ ok: false as const, e }));
      slowestMs = Math.max(slowestMs, performance.now() - start);
      // the same file read in this process: the thread must give the same answer (no mixed-up replies between files)
      const here = await decodeTiff(file, JOB_LIMITS).then((r) => ({ ok: true as const, r }), (e: unknown) => ({ ok: false as const, e }));
      if (got.ok) {
        outcomes.decoded = (outcomes.decoded ?? 0) + 1;
        const pages = got.r.pages;
        const valid = pages.length > 0 && pages.every((p) => p.width > 0 && p.height > 0 && p.data instanceof Float32Array && p.data.length === p.width * p.height);
        if (!valid) failures.push(`${tag} resolved with a malformed raster`);
        else if (!here.ok) failures.push(`${tag} decoded in the thread but not in process`);
        else if (here.r.pages.length !== pages.length || !here.r.pages.every((p, i) => p.width === pages[i].width && Buffer.from(p.data.buffer, p.data.byteOffset, p.data.byteLength).equals(Buffer.from(pages[i].data.buffer)))) {
          failures.push(`${tag} thread and in-process pixels differ`);
        }
      } else if (!(got.e instanceof ImagingError)) {
        failures.push(`${tag} rejected with ${String(got.e)} instead of an ImagingError`);
      } else {
        const e = got.e;
        outcomes[e.code] = (outcomes[e.code] ?? 0) + 1;
        // timeout and worker_failed mean a thread hung or died; a message must be a sentence without internals
        if (e.code === 'timeout' || e.code === 'worker_failed') failures.push(`${tag} ${e.code}`);
        if (e.message.length < 20 || /node_modules|\/work\/|\bat \w+ \(/.test(e.message)) failures.push(`${tag} message ${JSON.stringify(e.message)}`);
        if (here.ok || (here.e as ImagingError).code !== e.code) failures.push(`${tag} thread said ${e.code}, in process ${here.ok ? 'decoded' : (here.e as ImagingError).code}`);
      }
    }
    const totalMs = performance.now() - t0;
    const threads = decodeThreadStats().started - threads0;
    console.info(`fuzz (worker): ${NB_WORKER_CASES} cases in ${(totalMs / 1000).toFixed(1)} s, slowest ${slowestMs.toFixed(0)} ms, ${threads} thread(s), outcomes ${JSON.stringify(outcomes)}`);
    expect(failures).toEqual([]);
    expect(outcomes.decoded ?? 0).toBeGreaterThan(NB_WORKER_CASES * 0.05);
    expect(Object.keys(outcomes).length).toBeGreaterThanOrEqual(5);
    // sequential calls share one thread; a new thread per case would be a regression in cost, not safety
    expect(threads).toBeLessThanOrEqual(1);
  }, testTimeout(NB_WORKER_CASES));
});
