import { createRequire } from 'node:module';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Affine, Point } from '../../types';
import { applyAffine } from '../applyAffine';
import { fitAffine } from '../fitAffine';
import { createGaussian } from './randomHelpers';

// Cross-check against OpenCV's JavaScript build: npm package @techstark/opencv-js 4.5.2 (dev dependency;
// the bundled library reports itself as OpenCV 4.5.1). Loaded once here, as it is the slow import.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Cv = any;
let cv: Cv;

beforeAll(async () => {
  const require = createRequire(import.meta.url);
  const mod = require('@techstark/opencv-js');
  if (mod instanceof Promise) cv = await mod;
  else if (mod.Mat) cv = mod;
  else {
    await new Promise<void>((resolve) => {
      mod.onRuntimeInitialized = () => resolve();
    });
    cv = mod;
  }
}, 30_000);

function matToAffine(m: Cv): Affine {
  const d = Array.from(m.data64F as Float64Array);
  return [d[0], d[1], d[2], d[3], d[4], d[5]];
}

const AFM: Point[] = [
  { x: 12, y: 30 }, { x: 980, y: 44 }, { x: 510, y: 990 }, { x: 250, y: 260 }, { x: 760, y: 700 },
  { x: 90, y: 850 }, { x: 870, y: 410 }, { x: 430, y: 120 }, { x: 640, y: 560 }, { x: 333, y: 777 },
];
const TRUE: Affine = [0.47, 0.11, 400.5, 0.09, -0.5, 310.2]; // mirrored on purpose

function noisyFl(seed: number): Point[] {
  const { normal } = createGaussian(seed);
  return AFM.map((p) => applyAffine(TRUE, p)).map((q) => ({ x: q.x + 0.7 * normal(), y: q.y + 0.7 * normal() }));
}

describe('fitAffine vs OpenCV (@techstark/opencv-js 4.5.2)', () => {
  it('3 pairs: matches cv.getAffineTransform (1e-9: exact solve in double of float32-exact integer inputs)', () => {
    const afm = AFM.slice(0, 3);
    const fl = [{ x: 11, y: 7 }, { x: 471, y: -3 }, { x: 260, y: 500 }];
    const src = cv.matFromArray(3, 1, cv.CV_32FC2, afm.flatMap((p) => [p.x, p.y]));
    const dst = cv.matFromArray(3, 1, cv.CV_32FC2, fl.flatMap((p) => [p.x, p.y]));
    const m = cv.getAffineTransform(src, dst);
    const expected = matToAffine(m);
    [src, dst, m].forEach((x) => x.delete());
    fitAffine(afm, fl).flFromAfm.forEach((v, i) => expect(Math.abs(v - expected[i])).toBeLessThan(1e-9));
  });

  it('10 noisy pairs: matches cv.solve(DECOMP_SVD) on the [x y 1] design (1e-9: same LS problem, both in double)', () => {
    const fl = noisyFl(11);
    const a = cv.matFromArray(10, 3, cv.CV_64F, AFM.flatMap((p) => [p.x, p.y, 1]));
    const b = cv.matFromArray(10, 2, cv.CV_64F, fl.flatMap((q) => [q.x, q.y]));
    const x = new cv.Mat();
    expect(cv.solve(a, b, x, cv.DECOMP_SVD)).toBe(true);
    const m = Array.from(x.data64F as Float64Array); // 3×2, row-major: [a d; b e; c f]
    [a, b, x].forEach((mat) => mat.delete());
    const expected: Affine = [m[0], m[2], m[4], m[1], m[3], m[5]];
    fitAffine(AFM, fl).flFromAfm.forEach((v, i) => expect(Math.abs(v - expected[i])).toBeLessThan(1e-9));
  });

  it('10 noisy pairs: agrees with cv.estimateAffine2D refined on all points (1e-3 px over the field)', () => {
    // estimateAffine2D rejects method 0 in this build ("Unknown or unsupported robust estimation method"),
    // so we use RANSAC with a 1e6 px threshold (every pair an inlier) and its Levenberg–Marquardt refinement,
    // which minimises the same squared reprojection error. Tolerance 1e-3 px: OpenCV works on 32-bit float
    // copies of the points (from memory of its source; float32 spacing near 1000 px is 6e-5 px) and LM stops on
    // its own convergence criteria; observed differences were ≈ 2e-5 px.
    const fl = noisyFl(12);
    const src = cv.matFromArray(10, 1, cv.CV_64FC2, AFM.flatMap((p) => [p.x, p.y]));
    const dst = cv.matFromArray(10, 1, cv.CV_64FC2, fl.flatMap((q) => [q.x, q.y]));
    const inliers = new cv.Mat();
    const m = cv.estimateAffine2D(src, dst, inliers, cv.RANSAC, 1e6, 2000, 0.99, 100);
    const expected = matToAffine(m);
    expect(Array.from(inliers.data as Uint8Array).every((v) => v === 1)).toBe(true);
    [src, dst, inliers, m].forEach((mat) => mat.delete());
    const ours = fitAffine(AFM, fl).flFromAfm;
    for (const p of [{ x: 0, y: 0 }, { x: 1000, y: 0 }, { x: 0, y: 1000 }, { x: 1000, y: 1000 }]) {
      const q1 = applyAffine(ours, p);
      const q2 = applyAffine(expected, p);
      expect(Math.hypot(q1.x - q2.x, q1.y - q2.y)).toBeLessThan(1e-3);
    }
  });
});
