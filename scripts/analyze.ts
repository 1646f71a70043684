/**
 * `npm run analyze -- --topography A.tif --fluorescence F.tif --markers CD9,CD63,CD81 --out vesicles.csv [...]`:
 * analyses one correlative field from files, without the web app or a database, and writes one CSV row per vesicle
 * (and optionally a JSON summary). Exit codes: 0 done, 2 input to fix (the message says what), 1 unexpected failure.
 * Flags and formats: docs/cli.md, section "Batch command line".
 */
import { readFile, writeFile } from 'node:fs/promises';
import { basename, resolve } from 'node:path';
import { parseArgs } from 'node:util';
import { AnalysisError } from '../src/lib/analysis/errors';
import { fitAffine } from '../src/lib/analysis/geometry';
import {
  analyzeField, parseFiducialCsv, vesicleCsv, DEFAULT_EMISSION_NM, DEFAULT_NUMERICAL_APERTURE, type FieldStage,
} from '../src/lib/analysis/pipeline';
import type { FiducialPair } from '../src/lib/analysis/geometry';
import type { Raster } from '../src/lib/analysis/types';
import { decodeTiff, ImagingError, type DecodedTiff } from '../src/lib/imaging';

const USAGE = `Usage: npm run analyze -- --topography A.tif --fluorescence F.tif [--fluorescence G.tif ...]
         --markers CD9,CD63,CD81 --out vesicles.csv [--fiducials pairs.csv] [--summary summary.json]
         [--afm-pixel-nm N] [--fluor-pixel-nm N] [--threshold-nm N] [--marker-threshold CD9=N ...]
         [--emission-nm 520,590,670] [--na 1.4]
See docs/cli.md ("Batch command line").`;

const CAUTION = 'For research use only; not for diagnosis or treatment decisions.';
const DEFAULT_NA = DEFAULT_NUMERICAL_APERTURE;

/** A problem with the command line or the input files that the user can fix: exit code 2. */
class InputError extends Error {}

const log = (line: string) => process.stderr.write(`[analyze] ${line}\n`);

/** `npm run` starts scripts in the package folder; npm keeps the caller's folder in INIT_CWD, so paths are relative to it. */
const fromCaller = (path: string) => resolve(process.env.INIT_CWD ?? process.cwd(), path);

function parseCommandLine(argv: string[]) {
  try {
    return parseArgs({
      args: argv,
      strict: true,
      allowPositionals: false,
      options: {
        topography: { type: 'string' },
        fluorescence: { type: 'string', multiple: true },
        fiducials: { type: 'string' },
        markers: { type: 'string' },
        out: { type: 'string' },
        summary: { type: 'string' },
        'afm-pixel-nm': { type: 'string' },
        'fluor-pixel-nm': { type: 'string' },
        'threshold-nm': { type: 'string' },
        'marker-threshold': { type: 'string', multiple: true },
        'emission-nm': { type: 'string' },
        na: { type: 'string' },
        help: { type: 'boolean', short: 'h' },
      },
    }).values;
  } catch (error) {
    // node:util parseArgs reports unknown flags, missing values and stray words as TypeError with a code
    if (error instanceof TypeError && 'code' in error && String(error.code).startsWith('ERR_PARSE_ARGS')) {
      throw new InputError(`${error.message}\n${USAGE}`);
    }
    throw error;
  }
}

function positiveNumber(flag: string, text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v) || v <= 0) throw new InputError(`--${flag} must be a positive number, got "${text}".`);
  return v;
}

async function readInput(path: string, what: string): Promise<Buffer> {
  try {
    return await readFile(fromCaller(path));
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new InputError(`The ${what} file "${path}" does not exist; check the path.`);
    if (code === 'EISDIR') throw new InputError(`The ${what} path "${path}" is a folder; give a file.`);
    throw new InputError(`The ${what} file "${path}" cannot be read (${code ?? String(error)}).`);
  }
}

async function readTiff(path: string, what: string): Promise<DecodedTiff> {
  const bytes = await readInput(path, what);
  try {
    return await decodeTiff(new Uint8Array(bytes.buffer, bytes.byteOffset, bytes.byteLength));
  } catch (error) {
    if (error instanceof ImagingError) {
      const hint = error.code === 'not_tiff' ? ' Export the image as TIFF (OME-TIFF or baseline TIFF) and try again.' : '';
      throw new InputError(`The ${what} file "${path}" could not be read as a TIFF: ${error.message}${hint}`);
    }
    throw error;
  }
}

/** Pixel size from the flag, else from the file; x and y must agree because the analysis assumes square pixels. */
function pixelSizeNm(tiff: DecodedTiff, path: string, flag: string, given: number | undefined): number {
  const fromFile = tiff.meta.pixelSizeNm;
  for (const w of tiff.meta.warnings) log(`note: ${basename(path)}: ${w}`);
  if (given !== undefined) {
    if (fromFile && Math.abs(fromFile.x / given - 1) > 0.01) {
      log(`note: ${basename(path)} states ${fromFile.x.toPrecision(4)} nm/px; using --${flag} ${given} nm/px as given.`);
    }
    return given;
  }
  if (!fromFile) {
    throw new InputError(`The file "${path}" does not state its pixel size; give it with --${flag} <nm per pixel>.`);
  }
  if (Math.abs(fromFile.x / fromFile.y - 1) > 0.01) {
    throw new InputError(
      `The file "${path}" has non-square pixels (${fromFile.x} × ${fromFile.y} nm); resample it to square pixels or give --${flag}.`,
    );
  }
  return fromFile.x;
}

function parseMarkerThresholds(items: readonly string[], markers: readonly string[]): Record<string, number> {
  const out: Record<string, number> = {};
  for (const item of items) {
    const match = /^([^=]+)=(.+)$/.exec(item);
    const value = match ? Number(match[2]) : Number.NaN;
    if (!match || !Number.isFinite(value)) {
      throw new InputError(`--marker-threshold must look like CD9=250 (marker=joint amplitude in counts, the total counts of one vesicle's fitted PSF), got "${item}".`);
    }
    const marker = match[1].trim();
    if (!markers.includes(marker)) {
      throw new InputError(`--marker-threshold names "${marker}", which is not in --markers (${markers.join(',')}).`);
    }
    out[marker] = value;
  }
  return out;
}

function emissionList(text: string | undefined, markers: readonly string[]): number[] {
  if (text === undefined) {
    log(`note: no --emission-nm; assuming ${DEFAULT_EMISSION_NM} nm for every channel (sets the PSF width).`);
    return markers.map(() => DEFAULT_EMISSION_NM);
  }
  const values = text.split(',').map((s) => positiveNumber('emission-nm', s.trim())!);
  if (values.length === 1) return markers.map(() => values[0]);
  if (values.length !== markers.length) {
    throw new InputError(`--emission-nm has ${values.length} values but --markers has ${markers.length}; give one per marker or one for all.`);
  }
  return values;
}

async function readFiducials(path: string): Promise<FiducialPair[]> {
  const text = (await readInput(path, 'fiducial CSV')).toString('utf8');
  let pairs: FiducialPair[];
  try {
    pairs = parseFiducialCsv(text);
  } catch (error) {
    if (error instanceof AnalysisError) throw new InputError(`${path}: ${error.message}`);
    throw error;
  }
  if (pairs.length < 3) {
    throw new InputError(`${path} has ${pairs.length} fiducial pair(s); an affine registration needs at least 3 (better 4 or more).`);
  }
  try {
    fitAffine(pairs.map((p) => p.afm), pairs.map((p) => p.fl));
  } catch (error) {
    if (error instanceof AnalysisError) throw new InputError(`${path}: ${error.message}`);
    throw error;
  }
  return pairs;
}

async function main(argv: string[]): Promise<number> {
  const args = parseCommandLine(argv);
  if (args.help) {
    process.stdout.write(`${USAGE}\n`);
    return 0;
  }
  const missing = (['topography', 'fluorescence', 'markers', 'out'] as const).filter((k) => args[k] === undefined);
  if (missing.length > 0) throw new InputError(`Missing ${missing.map((k) => `--${k}`).join(', ')}.\n${USAGE}`);
  const markers = args.markers!.split(',').map((m) => m.trim());
  if (markers.some((m) => m === '') || new Set(markers).size !== markers.length) {
    throw new InputError(`--markers must be distinct, non-empty names separated by commas, got "${args.markers}".`);
  }
  const afmPixelGiven = positiveNumber('afm-pixel-nm', args['afm-pixel-nm']);
  const flPixelGiven = positiveNumber('fluor-pixel-nm', args['fluor-pixel-nm']);
  const numericalAperture = positiveNumber('na', args.na) ?? DEFAULT_NA;
  if (numericalAperture > 1.7) throw new InputError(`--na must be at most 1.7 (immersion objectives), got ${numericalAperture}.`);
  let thresholdNm: number | undefined;
  if (args['threshold-nm'] !== undefined) {
    thresholdNm = Number(args['threshold-nm']);
    if (!Number.isFinite(thresholdNm) || args['threshold-nm'].trim() === '') {
      throw new InputError(`--threshold-nm must be a number of nm, got "${args['threshold-nm']}".`);
    }
  }
  const thresholds = parseMarkerThresholds(args['marker-threshold'] ?? [], markers);
  const emissionNm = emissionList(args['emission-nm'], markers);
  const fiducialPairs = args.fiducials ? await readFiducials(args.fiducials) : undefined;

  // read
  let t = performance.now();
  const topography = await readTiff(args.topography!, 'topography');
  const afmPixelNm = pixelSizeNm(topography, args.topography!, 'afm-pixel-nm', afmPixelGiven);
  if (topography.pages.length > 1) log(`note: ${basename(args.topography!)} has ${topography.pages.length} pages; the first is the height map.`);
  const pages: Raster[] = [];
  let flPixelNm: number | undefined = flPixelGiven;
  const pageCounts: string[] = [];
  for (const path of args.fluorescence!) {
    const tiff = await readTiff(path, 'fluorescence');
    const size = pixelSizeNm(tiff, path, 'fluor-pixel-nm', flPixelGiven);
    if (flPixelNm !== undefined && Math.abs(size / flPixelNm - 1) > 0.01) {
      throw new InputError(`The fluorescence files state different pixel sizes (${flPixelNm} and ${size} nm); give --fluor-pixel-nm.`);
    }
    flPixelNm = size;
    pages.push(...tiff.pages);
    pageCounts.push(`${basename(path)}: ${tiff.pages.length} page${tiff.pages.length === 1 ? '' : 's'}`);
  }
  if (pages.length !== markers.length) {
    throw new InputError(
      `--markers names ${markers.length} marker(s) (${markers.join(',')}) but the fluorescence input has ${pages.length} ` +
        `channel(s) (${pageCounts.join('; ')}). Give one page per marker, in the same order.`,
    );
  }
  log(`read ${pages.length} channel(s), AFM ${topography.pages[0].width}×${topography.pages[0].height} px at ${afmPixelNm.toPrecision(4)} nm/px, ` +
    `fluorescence ${pages[0].width}×${pages[0].height} px at ${flPixelNm!.toPrecision(4)} nm/px (${(performance.now() - t).toFixed(0)} ms)`);

  // analyse, timing each stage
  const started = new Map<FieldStage, number>();
  const result = analyzeField(
    {
      heightNm: topography.pages[0],
      afmPixelNm,
      channels: markers.map((marker, i) => ({ marker, raster: pages[i], emissionNm: emissionNm[i] })),
      flPixelNm: flPixelNm!,
      numericalAperture,
      fiducialPairs,
      thresholdCountsByMarker: thresholds,
    },
    {
      thresholdNm,
      onProgress: (stage, fraction) => {
        if (fraction === 0) started.set(stage, performance.now());
        if (fraction === 1) log(`${stage.padEnd(9)} ${(performance.now() - (started.get(stage) ?? 0)).toFixed(0).padStart(6)} ms`);
      },
    },
  );

  // write
  t = performance.now();
  const { summary } = result;
  await writeFile(fromCaller(args.out!), vesicleCsv(result.records, markers));
  if (args.summary) {
    const report = {
      caution: CAUTION,
      inputs: { topography: args.topography, fluorescence: args.fluorescence, fiducials: args.fiducials ?? null },
      parameters: { markers, emissionNm, numericalAperture, afmPixelNm, flPixelNm, thresholdNm: thresholdNm ?? null, markerThresholds: thresholds },
      ...summary,
    };
    await writeFile(fromCaller(args.summary), `${JSON.stringify(report, null, 2)}\n`);
  }
  const reg = summary.registration;
  log(`write     ${(performance.now() - t).toFixed(0).padStart(6)} ms`);
  log(`${summary.nbVesicles} vesicles (${summary.nbOutOfFrame} outside the fluorescence frame); ` +
    markers.map((m) => `${m}+ ${summary.positiveByMarker[m]}`).join(', ') + `; ${summary.nbVesiclesWithoutMarker} without marker`);
  log(`registration (${reg.source}, ${reg.nbPairs} pairs): FRE ${reg.freNm.toFixed(1)} nm; ${reg.description}`);
  for (const w of reg.warnings) log(`warning: ${w.message}`);
  log(CAUTION);
  return 0;
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (error: unknown) => {
    if (error instanceof InputError || error instanceof AnalysisError) {
      const hint = error instanceof AnalysisError && error.code === 'too_few_background_apertures'
        ? ' Give a threshold for every marker with --marker-threshold MARKER=counts (e.g. from a control sample).'
        : '';
      process.stderr.write(`analyze: ${error.message}${hint}\n`);
      process.exitCode = 2;
    } else {
      process.stderr.write(`analyze: unexpected failure: ${error instanceof Error ? (error.stack ?? error.message) : String(error)}\n`);
      process.exitCode = 1;
    }
  },
);
