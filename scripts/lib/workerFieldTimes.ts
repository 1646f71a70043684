/**
 * Child process of `npm run bench:cold` (a benchmark, not a test): analyses the same field N times in one fresh
 * process, as the job worker does after a start, and prints each field's wall time (ms) as one JSON line.
 * `node --import tsx scripts/lib/workerFieldTimes.ts <folder> <N> <warm-up|none>`: with warm-up, the worker's own
 * warmUpAnalysis() runs first (as in scripts/worker.ts), and its time is printed too.
 */
import { join } from 'node:path';
import { warmUpAnalysis } from '../../src/lib/analysis/pipeline';
import { analyzeFieldFiles } from './analyzeFieldFiles';

const [dir, count, mode] = process.argv.slice(2);
const files = { name: 'field', topography: join(dir, 'topo.tif'), fluorescence: [join(dir, 'stack.tif')], fiducials: join(dir, 'pairs.csv') };
const settings = { markers: ['CD9', 'CD63', 'CD81'], emissionNmGiven: [520, 590, 670], numericalAperture: 1.4, thresholdCountsByMarker: {}, tipRadiusNm: 8 };
let warmUpMs = 0;
if (mode === 'warm-up') {
  const t = performance.now();
  warmUpAnalysis();
  warmUpMs = performance.now() - t;
}
const fieldMs: number[] = [];
for (let i = 0; i < Number(count); i++) {
  const t = performance.now();
  await analyzeFieldFiles(files, settings, () => undefined);
  fieldMs.push(performance.now() - t);
}
console.log(JSON.stringify({ warmUpMs, fieldMs }));
