import { describe, expect, it } from 'vitest';
import { createRng } from '../../synthetic/random';
import { labelComponents } from '../labelComponents';

/**
 * Reference: flood fill from each unlabelled foreground pixel in raster order (so labels come in raster order of
 * each component's first pixel), then statistics summed pixel by pixel.
 */
function floodFillReference(mask: Uint8Array, width: number, height: number, connectivity: 4 | 8) {
  const steps = connectivity === 8
    ? [[-1, -1], [0, -1], [1, -1], [-1, 0], [1, 0], [-1, 1], [0, 1], [1, 1]]
    : [[0, -1], [-1, 0], [1, 0], [0, 1]];
  const labels = new Int32Array(width * height);
  let nb = 0;
  for (let i = 0; i < labels.length; i++) {
    if (!mask[i] || labels[i]) continue;
    labels[i] = ++nb;
    const stack = [i];
    while (stack.length > 0) {
      const p = stack.pop()!;
      const x = p % width;
      const y = (p - x) / width;
      for (const [dx, dy] of steps) {
        const qx = x + dx;
        const qy = y + dy;
        if (qx < 0 || qy < 0 || qx >= width || qy >= height) continue;
        const q = qy * width + qx;
        if (mask[q] && !labels[q]) {
          labels[q] = nb;
          stack.push(q);
        }
      }
    }
  }
  const area = new Array<number>(nb + 1).fill(0);
  const xMin = new Array<number>(nb + 1).fill(width);
  const yMin = new Array<number>(nb + 1).fill(height);
  const xMax = new Array<number>(nb + 1).fill(-1);
  const yMax = new Array<number>(nb + 1).fill(-1);
  const sumX = new Array<number>(nb + 1).fill(0);
  const sumY = new Array<number>(nb + 1).fill(0);
  for (let i = 0; i < labels.length; i++) {
    const l = labels[i];
    const x = i % width;
    const y = (i - x) / width;
    area[l]++;
    xMin[l] = Math.min(xMin[l], x);
    xMax[l] = Math.max(xMax[l], x);
    yMin[l] = Math.min(yMin[l], y);
    yMax[l] = Math.max(yMax[l], y);
    sumX[l] += x;
    sumY[l] += y;
  }
  const centroidX = sumX.map((s, l) => (area[l] > 0 ? s / area[l] : Number.NaN));
  const centroidY = sumY.map((s, l) => (area[l] > 0 ? s / area[l] : Number.NaN));
  return { labels, nbComponents: nb, area, xMin, yMin, xMax, yMax, centroidX, centroidY };
}

// 6 × 5, written row by row: four 8-connected components, six 4-connected ones
const HAND_MASK = Uint8Array.from([
  1, 1, 0, 0, 1, 0,
  0, 1, 0, 1, 1, 0,
  0, 0, 0, 0, 0, 0,
  1, 0, 1, 0, 0, 1,
  0, 1, 0, 0, 1, 1,
]);

describe('labelComponents', () => {
  it('labels a hand-made mask with 8-connectivity (answer worked out by hand)', () => {
    const r = labelComponents(HAND_MASK, 6, 5, 8);
    expect(r.nbComponents).toBe(4);
    // raster order of first pixels: (0,0), (4,0), (0,3) whose diagonal chain reaches (2,3), (5,3)
    expect(Array.from(r.labels)).toEqual([
      1, 1, 0, 0, 2, 0,
      0, 1, 0, 2, 2, 0,
      0, 0, 0, 0, 0, 0,
      3, 0, 3, 0, 0, 4,
      0, 3, 0, 0, 4, 4,
    ]);
    // label 0 is the background: 30 − 12 = 18 px; Σx over the image = 5·15 = 75, of the components 2 + 11 + 3 + 14
    // = 30, so the background's mean column is 45/18 = 2.5; Σy = 6·10 = 60, components 1 + 2 + 10 + 11 = 24 → 36/18 = 2
    expect(Array.from(r.areaPx)).toEqual([18, 3, 3, 3, 3]);
    expect(Array.from(r.xMin)).toEqual([0, 0, 3, 0, 4]);
    expect(Array.from(r.xMax)).toEqual([5, 1, 4, 2, 5]);
    expect(Array.from(r.yMin)).toEqual([0, 0, 0, 3, 3]);
    expect(Array.from(r.yMax)).toEqual([4, 1, 1, 4, 4]);
    const near = (a: Float64Array, b: number[]) => a.forEach((v, i) => expect(v).toBeCloseTo(b[i], 12));
    near(r.centroidX, [2.5, 2 / 3, 11 / 3, 1, 14 / 3]);
    near(r.centroidY, [2, 1 / 3, 2 / 3, 10 / 3, 11 / 3]);
  });

  it('labels the same mask with 4-connectivity: diagonal neighbours stay apart', () => {
    const r = labelComponents(HAND_MASK, 6, 5, 4);
    expect(r.nbComponents).toBe(6);
    expect(Array.from(r.labels)).toEqual([
      1, 1, 0, 0, 2, 0,
      0, 1, 0, 2, 2, 0,
      0, 0, 0, 0, 0, 0,
      3, 0, 4, 0, 0, 5,
      0, 6, 0, 0, 5, 5,
    ]);
    expect(Array.from(r.areaPx)).toEqual([18, 3, 3, 1, 1, 3, 1]);
  });

  it('agrees with a flood-fill reference on random masks (sizes down to 1 × N and N × 1, both connectivities)', () => {
    // Invariant test: every label and every statistic must equal the brute-force reference exactly
    // (centroids are sums of integers divided by the area, so they are exact too).
    const rng = createRng(11);
    const sizes = [[1, 1], [1, 23], [23, 1], [2, 2], [3, 41], [41, 3], [31, 29], [64, 64], [97, 8]];
    let nbCases = 0;
    for (const [width, height] of sizes) {
      for (const density of [0, 0.05, 0.3, 0.5, 0.7, 0.95, 1]) {
        for (const connectivity of [4, 8] as const) {
          for (let rep = 0; rep < 3; rep++) {
            // any non-zero byte is foreground
            const mask = Uint8Array.from({ length: width * height }, () => (rng.uniform() < density ? 1 + Math.floor(rng.uniform() * 255) : 0));
            const copy = mask.slice();
            const got = labelComponents(mask, width, height, connectivity);
            const ref = floodFillReference(mask, width, height, connectivity);
            expect(mask).toEqual(copy); // input untouched (STYLE §3)
            expect(got.nbComponents).toBe(ref.nbComponents);
            expect(got.labels).toEqual(ref.labels);
            expect(Array.from(got.areaPx)).toEqual(ref.area);
            expect(Array.from(got.xMin)).toEqual(ref.xMin);
            expect(Array.from(got.yMin)).toEqual(ref.yMin);
            expect(Array.from(got.xMax)).toEqual(ref.xMax);
            expect(Array.from(got.yMax)).toEqual(ref.yMax);
            expect(Array.from(got.centroidX)).toEqual(ref.centroidX);
            expect(Array.from(got.centroidY)).toEqual(ref.centroidY);
            nbCases++;
          }
        }
      }
    }
    expect(nbCases).toBe(sizes.length * 7 * 2 * 3);
  });

  it('reports an empty background (area 0, empty box, NaN centroid) for an all-foreground mask', () => {
    const r = labelComponents(new Uint8Array(12).fill(1), 4, 3);
    expect(r.nbComponents).toBe(1);
    expect(Array.from(r.areaPx)).toEqual([0, 12]);
    expect([r.xMin[0], r.yMin[0], r.xMax[0], r.yMax[0]]).toEqual([4, 3, -1, -1]);
    expect(r.centroidX[0]).toBeNaN();
    expect([r.centroidX[1], r.centroidY[1]]).toEqual([1.5, 1]);
  });

  it('writes into a given labels array, overwriting what was there', () => {
    const out = new Int32Array(30).fill(99);
    const r = labelComponents(HAND_MASK, 6, 5, 8, out);
    expect(r.labels).toBe(out);
    expect(out).toEqual(labelComponents(HAND_MASK, 6, 5, 8).labels);
  });

  it('rejects malformed sizes, masks and connectivities', () => {
    expect(() => labelComponents(new Uint8Array(6), 0, 6)).toThrow(RangeError);
    expect(() => labelComponents(new Uint8Array(6), 2.5, 2)).toThrow(RangeError);
    expect(() => labelComponents(new Uint8Array(5), 2, 3)).toThrow(RangeError);
    expect(() => labelComponents(new Uint8Array(6), 2, 3, 6 as 8)).toThrow(RangeError);
    expect(() => labelComponents(new Uint8Array(6), 2, 3, 8, new Int32Array(5))).toThrow(RangeError);
  });
});
