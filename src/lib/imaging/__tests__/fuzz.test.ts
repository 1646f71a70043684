// Mutation fuzzing of the TIFF reader. Every mutated file must either decode or be rejected with an
// ImagingError: any other error type, or a case slower than 5 s, fails the test with its seed.
// FUZZ_CASES=50000 npx vitest run --project unit src/lib/imaging/__tests__/fuzz.test.ts  for a long run.
import { describe, expect, it } from 'vitest';
import { decodeInWorker } from '../decodeInWorker';
import { decodeTiff, ImagingError, inspectTiff } from '../decodeWorker.mjs';
import { baseFiles, mutate, prng } from './fuzzCases';

const NB_CASES = Number(process.env.FUZZ_CASES ?? 5000);
const NB_WORKER_CASES = 20;
const CASE_BUDGET_MS = 5000;

describe('fuzz: mutated TIFF files decode or fail with ImagingError only', () => {
  const bases = baseFiles();

  it(`${NB_CASES} in-process cases (inspectTiff + decodeTiff)`, async () => {
    const failures: string[] = [];
    const outcomes: Record<string, number> = {};
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
      const ms = performance.now() - start;
      if (ms > CASE_BUDGET_MS) failures.push(`seed ${seed} [${steps}] took ${ms.toFixed(0)} ms`);
    }
    const totalMs = performance.now() - t0;
    console.info(`fuzz: ${NB_CASES} cases in ${(totalMs / 1000).toFixed(1)} s, outcomes ${JSON.stringify(outcomes)}`);
    expect(failures).toEqual([]);
    // the mutators must exercise both paths, or the test proves nothing
    expect(outcomes.decoded ?? 0).toBeGreaterThan(NB_CASES * 0.05);
    expect(Object.keys(outcomes).length).toBeGreaterThanOrEqual(5);
  });

  it(`${NB_WORKER_CASES} cases through decodeInWorker`, async () => {
    const codes: string[] = [];
    for (let c = 0; c < NB_WORKER_CASES; c++) {
      const seed = 900_000 + c;
      const { file, steps } = mutate(bases[c % bases.length], seed);
      try {
        await decodeInWorker(file, {}, { timeoutMs: CASE_BUDGET_MS });
        codes.push('decoded');
      } catch (err) {
        expect(err, `seed ${seed} [${steps}]`).toBeInstanceOf(ImagingError);
        codes.push((err as ImagingError).code);
      }
    }
    expect(codes).not.toContain('timeout');
    expect(codes).not.toContain('worker_failed');
  });
});
