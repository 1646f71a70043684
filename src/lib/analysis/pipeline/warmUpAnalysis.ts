import { makeCorrelativeScene } from '../synthetic/makeCorrelativeScene';
import { analyzeField } from './analyzeField';

/**
 * Runs the whole field analysis once on a small invented field (384² height map, three 128² frames, 20 vesicles,
 * beads and fiducial picks), so that a long-running process (the job worker) compiles the hot loops before its first
 * real field instead of during it. V8 compiles each long loop on its own after it has run a while (common practice
 * knowledge of V8's tiering); the first field of a fresh process otherwise pays that, and was the slowest of ten.
 *
 * Pure and deterministic: the scene is seeded and the result is discarded except for its vesicle count.
 * @returns the number of vesicles the warm-up field gave (a check that it ran)
 */
export function warmUpAnalysis(): number {
  const scene = makeCorrelativeScene({ seed: 3, afmSizePx: 384, flSizePx: 128, nbVesicles: 20, nbVesiclesOutsideAfm: 10, nbBeads: 4, nbBeadsOutsideAfm: 1 });
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
