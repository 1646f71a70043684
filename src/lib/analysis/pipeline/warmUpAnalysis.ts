import { makeCorrelativeScene } from '../synthetic/makeCorrelativeScene';
import { analyzeField } from './analyzeField';

/**
 * Runs the whole field analysis a few times on a small invented field (384² height map, three 128² frames, 20
 * vesicles, beads and fiducial picks), so that a long-running process (the job worker) compiles the hot code before
 * its first real field instead of during it. V8 compiles a long loop on its own after it has run a while, and a
 * function called once per field as a whole only after a few calls (common knowledge of V8's tiering, from memory).
 * Measured with npm run bench:cold: with one round the first real field was still 2.4× slower than the tenth; with
 * four to eight rounds 1.3–1.6×.
 *
 * Pure and deterministic: the scene is seeded and the result is discarded except for its vesicle count.
 * @param rounds - how many times the field is analysed
 * @returns the number of vesicles the warm-up field gave (a check that it ran)
 */
export function warmUpAnalysis(rounds = 6): number {
  if (!(Number.isInteger(rounds) && rounds >= 1)) throw new RangeError(`rounds must be a whole number ≥ 1, got ${rounds}`);
  const scene = makeCorrelativeScene({ seed: 3, afmSizePx: 384, flSizePx: 128, nbVesicles: 20, nbVesiclesOutsideAfm: 10, nbBeads: 4, nbBeadsOutsideAfm: 1 });
  let nbVesicles = 0;
  for (let r = 0; r < rounds; r++) nbVesicles = runOnce(scene);
  return nbVesicles;
}

function runOnce(scene: ReturnType<typeof makeCorrelativeScene>): number {
  const result = analyzeField(
    {
      heightNm: scene.heightNm,
      afmPixelNm: scene.afmPixelNm,
      channels: scene.channels.map((c) => ({ marker: c.marker, raster: c.raster, emissionNm: c.emissionNm })),
      flPixelNm: scene.flPixelNm,
      numericalAperture: scene.numericalAperture,
      fiducialPairs: scene.fiducialPicks,
      thresholdCountsByMarker: {},
    },
    { tipRadiusNm: scene.tip.radiusNm },
  );
  return result.records.length;
}
