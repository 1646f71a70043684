import type { Point } from '../types';

/**
 * Merges spots of several channels into one candidate list: a spot within `radiusPx` of an earlier candidate joins
 * it (the candidate becomes the mean of its members), else it starts a new one. Channels are taken in order and
 * spots in list order, so the result is deterministic.
 *
 * @param spotsPerChannel - spot positions per channel (px); not modified
 * @param radiusPx - merge distance (px), ≥ 0
 * @returns merged candidate positions (px)
 * @throws RangeError for a negative or non-finite radius
 */
export function mergeSpots(spotsPerChannel: readonly (readonly Point[])[], radiusPx: number): Point[] {
  if (!(radiusPx >= 0) || !Number.isFinite(radiusPx)) throw new RangeError(`radiusPx must be a finite number ≥ 0, got ${radiusPx}`);
  // a uniform grid of cell = radius keeps this linear; candidates move a little as members join, so search ±2 cells
  const cell = Math.max(radiusPx, 1e-9);
  const grid = new Map<string, number[]>();
  const sums: { x: number; y: number; n: number }[] = [];
  const key = (gx: number, gy: number) => `${gx},${gy}`;
  for (const spots of spotsPerChannel) {
    for (const s of spots) {
      const gx = Math.floor(s.x / cell);
      const gy = Math.floor(s.y / cell);
      let best = -1;
      let bestD = radiusPx;
      for (let dy = -2; dy <= 2; dy++) {
        for (let dx = -2; dx <= 2; dx++) {
          for (const c of grid.get(key(gx + dx, gy + dy)) ?? []) {
            const d = Math.hypot(sums[c].x / sums[c].n - s.x, sums[c].y / sums[c].n - s.y);
            if (d <= bestD) {
              bestD = d;
              best = c;
            }
          }
        }
      }
      if (best >= 0) {
        sums[best].x += s.x;
        sums[best].y += s.y;
        sums[best].n++;
      } else {
        sums.push({ x: s.x, y: s.y, n: 1 });
        const k = key(gx, gy);
        const list = grid.get(k);
        if (list) list.push(sums.length - 1);
        else grid.set(k, [sums.length - 1]);
      }
    }
  }
  return sums.map((c) => ({ x: c.x / c.n, y: c.y / c.n }));
}
