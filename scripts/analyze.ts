/**
 * `npm run analyze -- --topography A.tif --fluorescence F.tif --markers CD9,CD63,CD81 --out vesicles.csv [...]`:
 * analyses one correlative field from files, without the web app or a database, and writes one CSV row per vesicle
 * (and optionally a JSON summary). `--batch fields.csv --out-dir DIR` analyses every field listed in one process.
 * Exit codes: 0 done, 2 input to fix (the message says what), 1 unexpected failure.
 * Flags and formats: docs/cli.md; the CSV columns: docs/vesicle-columns.md. Run as bundled JavaScript (build/cli,
 * see scripts/build-cli.ts), so no TypeScript is transpiled at start.
 */
import { mkdir, readFile, writeFile } from 'node:fs/promises';
import { dirname, join, resolve } from 'node:path';
import { parseArgs } from 'node:util';
import { parse as parseCsv } from 'csv-parse/sync';
import { AnalysisError } from '../src/lib/analysis/errors';
import { DEFAULT_NUMERICAL_APERTURE } from '../src/lib/analysis/pipeline/opticsDefaults';
import { analyzeFieldFiles, CAUTION, InputError, readFiducials, type FieldFiles, type FieldSettings } from './lib/analyzeFieldFiles';

const USAGE = `Usage: npm run analyze -- --topography A.tif --fluorescence F.tif [--fluorescence G.tif ...]
         --markers CD9,CD63,CD81 --out vesicles.csv [--fiducials pairs.csv] [--summary summary.json]
         [--tip-radius NM] [--afm-pixel-nm N] [--fluor-pixel-nm N] [--threshold-nm N]
         [--marker-threshold CD9=N ...] [--emission-nm 520,590,670] [--na 1.4]
   or: npm run analyze -- --batch fields.csv --out-dir DIR --markers CD9,CD63,CD81 [same optional flags]
${CAUTION}
See docs/cli.md; the CSV columns are described in docs/vesicle-columns.md.`;

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
        batch: { type: 'string' },
        'out-dir': { type: 'string' },
        'tip-radius': { type: 'string' },
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

type Args = ReturnType<typeof parseCommandLine>;

function positiveNumber(flag: string, text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v) || v <= 0) throw new InputError(`--${flag} must be a positive number, got "${text}".`);
  return v;
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

function emissionList(text: string | undefined, markers: readonly string[]): number[] | undefined {
  if (text === undefined) return undefined;
  const values = text.split(',').map((s) => positiveNumber('emission-nm', s.trim())!);
  if (values.length === 1) return markers.map(() => values[0]);
  if (values.length !== markers.length) {
    throw new InputError(`--emission-nm has ${values.length} values but --markers has ${markers.length}; give one per marker or one for all.`);
  }
  return values;
}

/** The flags every field shares. */
function settingsFrom(args: Args): FieldSettings {
  const markers = args.markers!.split(',').map((m) => m.trim());
  if (markers.some((m) => m === '') || new Set(markers).size !== markers.length) {
    throw new InputError(`--markers must be distinct, non-empty names separated by commas, got "${args.markers}".`);
  }
  const numericalAperture = positiveNumber('na', args.na) ?? DEFAULT_NUMERICAL_APERTURE;
  if (numericalAperture > 1.7) throw new InputError(`--na must be at most 1.7 (immersion objectives), got ${numericalAperture}.`);
  let thresholdNm: number | undefined;
  if (args['threshold-nm'] !== undefined) {
    thresholdNm = Number(args['threshold-nm']);
    if (!Number.isFinite(thresholdNm) || args['threshold-nm'].trim() === '') {
      throw new InputError(`--threshold-nm must be a number of nm, got "${args['threshold-nm']}".`);
    }
  }
  let tipRadiusNm: number | undefined;
  if (args['tip-radius'] !== undefined) {
    tipRadiusNm = Number(args['tip-radius']);
    if (args['tip-radius'].trim() === '' || !Number.isFinite(tipRadiusNm) || tipRadiusNm < 0 || tipRadiusNm > 1000) {
      throw new InputError(`--tip-radius must be the AFM tip's apex radius in nm (0 to 1000, e.g. 8), got "${args['tip-radius']}".`);
    }
  }
  return {
    markers,
    emissionNmGiven: emissionList(args['emission-nm'], markers),
    numericalAperture,
    afmPixelNmGiven: positiveNumber('afm-pixel-nm', args['afm-pixel-nm']),
    flPixelNmGiven: positiveNumber('fluor-pixel-nm', args['fluor-pixel-nm']),
    thresholdNm,
    thresholdCountsByMarker: parseMarkerThresholds(args['marker-threshold'] ?? [], markers),
    tipRadiusNm,
  };
}

const BATCH_COLUMNS = ['field', 'topography', 'fluorescence', 'fiducials'];

/**
 * The fields of a batch CSV: header field,topography,fluorescence[,fiducials]; fluorescence lists one stack or
 * one file per channel separated by ";"; paths are relative to the CSV's folder; field names name the outputs.
 */
async function readBatch(path: string): Promise<FieldFiles[]> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (error) {
    throw new InputError(`The batch file "${path}" cannot be read (${(error as NodeJS.ErrnoException).code ?? String(error)}); check the path.`);
  }
  let rows: string[][];
  try {
    rows = parseCsv(text, { bom: true, skip_empty_lines: true, trim: true, relax_column_count: true, comment: '#' }) as string[][];
  } catch (error) {
    throw new InputError(`The batch file "${path}" is not valid CSV: ${(error as Error).message}`);
  }
  const header = (rows.shift() ?? []).map((h) => h.toLowerCase());
  if (header.length < 3 || BATCH_COLUMNS.slice(0, header.length).some((c, i) => header[i] !== c) || header.length > 4) {
    throw new InputError(`The batch file "${path}" must start with the header ${BATCH_COLUMNS.join(',')} (fiducials may be left out), got "${header.join(',')}".`);
  }
  const folder = dirname(path);
  const seen = new Set<string>();
  return rows.map((row, i) => {
    const line = i + 2;
    const [field = '', topography = '', fluorescence = '', fiducials = ''] = row;
    if (!/^[A-Za-z0-9._-]+$/.test(field)) {
      throw new InputError(`${path} line ${line}: the field name "${field}" must be letters, digits, ".", "_" or "-" (it names the output files).`);
    }
    if (seen.has(field)) throw new InputError(`${path} line ${line}: the field name "${field}" is used twice.`);
    seen.add(field);
    if (!topography || !fluorescence) throw new InputError(`${path} line ${line}: give a topography and at least one fluorescence file.`);
    return {
      name: field,
      topography: resolve(folder, topography),
      fluorescence: fluorescence.split(';').map((p) => resolve(folder, p.trim())),
      fiducials: fiducials ? resolve(folder, fiducials) : undefined,
    };
  });
}

/** Hint for an analysis failure a flag can fix. */
function hintFor(error: AnalysisError): string {
  return error.code === 'too_few_background_apertures'
    ? ' Give a threshold for every marker with --marker-threshold MARKER=counts (e.g. from a control sample).'
    : error.code === 'no_consistent_pairing' ? ' Place fiducials and give them with --fiducials.' : '';
}

function logResult(summary: Record<string, unknown>, markers: readonly string[]): void {
  const s = summary as unknown as {
    nbVesicles: number; nbOutOfFrame: number; positiveByMarker: Record<string, number>; nbVesiclesWithoutMarker: number;
    registration: { source: string; nbPairs: number; freNm: number; description: string; warnings: { message: string }[] };
  };
  log(`${s.nbVesicles} vesicles (${s.nbOutOfFrame} outside the fluorescence frame); ` +
    markers.map((m) => `${m}+ ${s.positiveByMarker[m]}`).join(', ') + `; ${s.nbVesiclesWithoutMarker} without marker`);
  const reg = s.registration;
  log(`registration (${reg.source}, ${reg.nbPairs} pairs): FRE ${reg.freNm.toFixed(1)} nm; ${reg.description}`);
  for (const w of reg.warnings) log(`warning: ${w.message}`);
}

async function runOne(args: Args): Promise<number> {
  const missing = (['topography', 'fluorescence', 'markers', 'out'] as const).filter((k) => args[k] === undefined);
  if (missing.length > 0) throw new InputError(`Missing ${missing.map((k) => `--${k}`).join(', ')}.\n${USAGE}`);
  const settings = settingsFrom(args);
  if (args.fiducials) await readFiducials(fromCaller(args.fiducials)); // a bad fiducial file is reported before any image is read
  const files: FieldFiles = {
    name: 'field',
    topography: fromCaller(args.topography!),
    fluorescence: args.fluorescence!.map(fromCaller),
    fiducials: args.fiducials ? fromCaller(args.fiducials) : undefined,
  };
  const { csv, summary } = await analyzeFieldFiles(files, settings, log);
  const t = performance.now();
  await writeFile(fromCaller(args.out!), csv);
  if (args.summary) await writeFile(fromCaller(args.summary), `${JSON.stringify(summary, null, 2)}\n`);
  log(`write     ${(performance.now() - t).toFixed(0).padStart(6)} ms`);
  logResult(summary, settings.markers);
  log(CAUTION);
  return 0;
}

async function runBatch(args: Args): Promise<number> {
  const missing = (['markers', 'out-dir'] as const).filter((k) => args[k] === undefined);
  if (missing.length > 0) throw new InputError(`Missing ${missing.map((k) => `--${k}`).join(', ')}.\n${USAGE}`);
  const single = (['topography', 'fluorescence', 'fiducials', 'out', 'summary'] as const).filter((k) => args[k] !== undefined);
  if (single.length > 0) throw new InputError(`${single.map((k) => `--${k}`).join(', ')} belong(s) to one field; in --batch mode list files in the batch CSV.`);
  const settings = settingsFrom(args);
  const fields = await readBatch(fromCaller(args.batch!));
  const outDir = fromCaller(args['out-dir']!);
  await mkdir(outDir, { recursive: true });
  const failed: string[] = [];
  const started = performance.now();
  for (const [i, files] of fields.entries()) {
    log(`field ${i + 1}/${fields.length}: ${files.name}`);
    try {
      const { csv, summary } = await analyzeFieldFiles(files, settings, log);
      await writeFile(join(outDir, `${files.name}.csv`), csv);
      await writeFile(join(outDir, `${files.name}.summary.json`), `${JSON.stringify(summary, null, 2)}\n`);
      logResult(summary, settings.markers);
    } catch (error) {
      // one field's bad input must not stop a run over a hundred: report it and go on
      if (!(error instanceof InputError || error instanceof AnalysisError)) throw error;
      failed.push(files.name);
      log(`error: ${files.name}: ${error.message}${error instanceof AnalysisError ? hintFor(error) : ''}`);
    }
  }
  const seconds = (performance.now() - started) / 1000;
  log(`batch: ${fields.length - failed.length} of ${fields.length} field(s) written to ${outDir} in ${seconds.toFixed(1)} s` +
    (failed.length ? `; not analysed: ${failed.join(', ')}` : ''));
  log(CAUTION);
  return failed.length ? 2 : 0;
}

async function main(argv: string[]): Promise<number> {
  const args = parseCommandLine(argv);
  if (args.help) {
    process.stdout.write(`${USAGE}\n`);
    return 0;
  }
  return args.batch !== undefined ? runBatch(args) : runOne(args);
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (error: unknown) => {
    if (error instanceof InputError || error instanceof AnalysisError) {
      process.stderr.write(`analyze: ${error.message}${error instanceof AnalysisError ? hintFor(error) : ''}\n`);
      process.exitCode = 2;
    } else {
      process.stderr.write(`analyze: unexpected failure: ${error instanceof Error ? (error.stack ?? error.message) : String(error)}\n`);
      process.exitCode = 1;
    }
  },
);
