/**
 * One correlative field from files to CSV text, shared by `npm run analyze` (one field, or many with --batch) and
 * the test that the cold, batch and warm paths give the same bytes. Reads the TIFFs, takes pixel sizes and emission
 * wavelengths from the flags or the files (OME-XML), runs analyzeField and writes the per-vesicle table through the
 * product's CSV writer. Messages about the input are InputError (exit code 2).
 */
import { readFile } from 'node:fs/promises';
import { basename } from 'node:path';
import { AnalysisError } from '../../src/lib/analysis/errors';
import { fitAffine, type FiducialPair } from '../../src/lib/analysis/geometry';
import {
  analyzeField, parseFiducialCsv, vesicleCsvTable, DEFAULT_EMISSION_NM, type AnalyzeFieldResult, type FieldStage,
} from '../../src/lib/analysis/pipeline';
import type { Raster } from '../../src/lib/analysis/types';
import { writeCsv, RESEARCH_USE_COMMENT } from '../../src/lib/csv';
// the decoder itself, not the imaging barrel: that one also loads sharp for the tile pyramids, which costs start-up
import { decodeTiff } from '../../src/lib/imaging/decodeTiff';
import { ImagingError } from '../../src/lib/imaging/errors';
import type { DecodedTiff } from '../../src/lib/imaging/types';

/** A problem with the command line or the input files that the user can fix: exit code 2. */
export class InputError extends Error {}

/** The files of one field (absolute paths). */
export interface FieldFiles {
  /** Name for messages and, in batch mode, the output file names. */
  readonly name: string;
  readonly topography: string;
  /** One multi-page stack or one file per channel, in marker order. */
  readonly fluorescence: readonly string[];
  readonly fiducials?: string;
}

/** Settings shared by every field of a run (from the flags). */
export interface FieldSettings {
  readonly markers: readonly string[];
  /** Emission per marker from --emission-nm; wins over the files. */
  readonly emissionNmGiven?: readonly number[];
  readonly numericalAperture: number;
  readonly afmPixelNmGiven?: number;
  readonly flPixelNmGiven?: number;
  readonly thresholdNm?: number;
  readonly thresholdCountsByMarker: Readonly<Record<string, number>>;
  /** AFM tip radius (nm); undefined = not known (cap sizes uncorrected, flagged no_tip_radius). */
  readonly tipRadiusNm?: number;
}

/** What {@link analyzeFieldFiles} returns. */
export interface FieldFilesResult {
  /** The per-vesicle CSV (research-use comment line, header, rows; lines end with \n). */
  readonly csv: string;
  /** The field summary with the inputs and parameters used, for --summary. */
  readonly summary: Record<string, unknown>;
  readonly result: AnalyzeFieldResult;
}

/** The research-use caution, also in --help and the summary. */
export const CAUTION = RESEARCH_USE_COMMENT;

async function readInput(path: string, what: string): Promise<Buffer> {
  try {
    return await readFile(path);
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
function pixelSizeNm(tiff: DecodedTiff, path: string, flag: string, given: number | undefined, log: (line: string) => void): number {
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

/**
 * Reads and checks a fiducial CSV (at least 3 pairs, not on one line).
 * @throws InputError naming the file and the line to fix
 */
export async function readFiducials(path: string): Promise<FiducialPair[]> {
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

/**
 * Analyses one field from its files.
 *
 * @param files - the field's files (absolute paths)
 * @param settings - flags shared by every field
 * @param log - progress and notes, one line each (stage timings included)
 * @returns the CSV text, the summary object and the analysis result
 * @throws InputError for input to fix; AnalysisError from the analysis (the caller adds hints)
 */
export async function analyzeFieldFiles(files: FieldFiles, settings: FieldSettings, log: (line: string) => void): Promise<FieldFilesResult> {
  const { markers, numericalAperture, thresholdNm, thresholdCountsByMarker, tipRadiusNm } = settings;
  const fiducialPairs = files.fiducials ? await readFiducials(files.fiducials) : undefined;

  // read
  const t = performance.now();
  const topography = await readTiff(files.topography, 'topography');
  const afmPixelNm = pixelSizeNm(topography, files.topography, 'afm-pixel-nm', settings.afmPixelNmGiven, log);
  if (topography.pages.length > 1) log(`note: ${basename(files.topography)} has ${topography.pages.length} pages; the first is the height map.`);
  const pages: Raster[] = [];
  const emissionFromFiles: (number | null)[] = [];
  let flPixelNm: number | undefined = settings.flPixelNmGiven;
  const pageCounts: string[] = [];
  for (const path of files.fluorescence) {
    const tiff = await readTiff(path, 'fluorescence');
    const size = pixelSizeNm(tiff, path, 'fluor-pixel-nm', settings.flPixelNmGiven, log);
    if (flPixelNm !== undefined && Math.abs(size / flPixelNm - 1) > 0.01) {
      throw new InputError(`The fluorescence files state different pixel sizes (${flPixelNm} and ${size} nm); give --fluor-pixel-nm.`);
    }
    flPixelNm = size;
    pages.push(...tiff.pages);
    // OME-XML channels map to pages one to one when the counts agree (one plane per channel)
    const ome = tiff.meta.channelEmissionNm;
    if (ome.length > 0 && ome.length !== tiff.pages.length) {
      log(`note: ${basename(path)} describes ${ome.length} OME channel(s) for ${tiff.pages.length} page(s); its emission wavelengths were not used.`);
    }
    emissionFromFiles.push(...tiff.pages.map((_, i) => (ome.length === tiff.pages.length ? ome[i] : null)));
    pageCounts.push(`${basename(path)}: ${tiff.pages.length} page${tiff.pages.length === 1 ? '' : 's'}`);
  }
  if (pages.length !== markers.length) {
    throw new InputError(
      `--markers names ${markers.length} marker(s) (${markers.join(',')}) but the fluorescence input has ${pages.length} ` +
        `channel(s) (${pageCounts.join('; ')}). Give one page per marker, in the same order.`,
    );
  }
  // emission per channel: the flag wins, then the file's OME-XML, then the default with a note
  const emissionNm = markers.map((_, i) => settings.emissionNmGiven?.[i] ?? emissionFromFiles[i] ?? DEFAULT_EMISSION_NM);
  const emissionSource = markers.map((_, i) => (settings.emissionNmGiven ? 'flag' : emissionFromFiles[i] != null ? 'ome-xml' : 'default'));
  const defaulted = markers.filter((_, i) => emissionSource[i] === 'default');
  if (defaulted.length > 0) {
    log(`warning: no emission wavelength for ${defaulted.join(', ')} in --emission-nm or the files' OME-XML; assuming ${DEFAULT_EMISSION_NM} nm (sets the PSF width).`);
  }
  if (tipRadiusNm === undefined) log('note: no --tip-radius; cap sizes are not tip-corrected (cap_flag no_tip_radius).');
  log(`read ${pages.length} channel(s), AFM ${topography.pages[0].width}×${topography.pages[0].height} px at ${afmPixelNm.toPrecision(4)} nm/px, ` +
    `fluorescence ${pages[0].width}×${pages[0].height} px at ${flPixelNm!.toPrecision(4)} nm/px (${(performance.now() - t).toFixed(0)} ms)`);

  // analyse, timing each stage
  // wall and CPU time per stage: on a shared machine the wall time also counts waiting for a core
  const started = new Map<FieldStage, { wallMs: number; cpu: NodeJS.CpuUsage }>();
  const result = analyzeField(
    {
      heightNm: topography.pages[0],
      afmPixelNm,
      channels: markers.map((marker, i) => ({ marker, raster: pages[i], emissionNm: emissionNm[i] })),
      flPixelNm: flPixelNm!,
      numericalAperture,
      fiducialPairs,
      thresholdCountsByMarker,
    },
    {
      thresholdNm,
      tipRadiusNm: tipRadiusNm ?? 0,
      onProgress: (stage, fraction) => {
        if (fraction === 0) started.set(stage, { wallMs: performance.now(), cpu: process.cpuUsage() });
        const start = started.get(stage);
        if (fraction === 1 && start) {
          const cpu = process.cpuUsage(start.cpu);
          log(`${stage.padEnd(9)} ${(performance.now() - start.wallMs).toFixed(0).padStart(6)} ms (CPU ${((cpu.user + cpu.system) / 1000).toFixed(0)} ms)`);
        }
      },
    },
  );

  const csv = writeCsv({ comments: [CAUTION], ...vesicleCsvTable(result.records, markers), lineEnding: '\n' });
  const summary = {
    caution: CAUTION,
    inputs: { topography: files.topography, fluorescence: files.fluorescence, fiducials: files.fiducials ?? null },
    parameters: {
      markers, emissionNm, emissionSource, numericalAperture, afmPixelNm, flPixelNm, thresholdNm: thresholdNm ?? null,
      markerThresholds: thresholdCountsByMarker, tipRadiusNm: tipRadiusNm ?? null,
    },
    ...result.summary,
  };
  return { csv, summary, result };
}
