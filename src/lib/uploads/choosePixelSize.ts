/**
 * Decides which pixel size a field uses: the one the person typed, or the one read from the file,
 * or none (the person must type one). Pure, so the upload form and the server decide alike.
 */

/** Which image a pixel size belongs to. */
export type PixelSizeKind = 'afm' | 'fluorescence';

/** What the TIFF reader found about a file's pixel size. */
export interface FilePixelSize {
  pixelSizeNm: { x: number; y: number } | null;
  pixelSizeSource: string | null;
}

/** The outcome: `valueNm` is null when the field cannot be saved until a pixel size is typed. */
export interface PixelSizeChoice {
  valueNm: number | null;
  source: 'typed' | 'ome-xml' | 'resolution-tags' | null;
  /** Why a pixel size must be typed (only when `valueNm` is null). */
  error: string | null;
  /** Things the person should check; the value is still usable. */
  warnings: string[];
}

/**
 * Plausible pixel sizes per instrument, in nm (common practice: AFM scans of EVs run from a few Å to
 * a few µm per pixel; widefield/confocal cameras from tens of nm to a few µm per pixel).
 */
export const PLAUSIBLE_PIXEL_NM: Record<PixelSizeKind, { min: number; max: number }> = {
  afm: { min: 0.05, max: 2000 },
  fluorescence: { min: 10, max: 5000 },
};

/** Pixels per inch that image programs write when nothing was calibrated (common practice). */
export const DEFAULT_PPI = [72, 96, 150, 300] as const;

const NM_PER_INCH = 2.54e7; // 1 inch = 25.4 mm exactly
const LABEL: Record<PixelSizeKind, string> = { afm: 'AFM', fluorescence: 'fluorescence' };
const SOURCE: Record<string, string> = { 'ome-xml': 'OME-XML', 'resolution-tags': 'resolution tags' };

/** Formats a length in nm with 4 significant digits and thousands separators. */
export const fmtNm = (nm: number) => `${Number(nm.toPrecision(4)).toLocaleString('en-US')} nm`;
const relDiff = (a: number, b: number) => Math.abs(a - b) / Math.min(Math.abs(a), Math.abs(b));

/**
 * Why the file's pixel size must not be used, or null when it may be.
 * A resolution-tag size equal to a default pixels-per-inch value (any unit: 72 px/inch is also written
 * as 28.35 px/cm) is refused, and so is any size outside {@link PLAUSIBLE_PIXEL_NM}.
 */
export function distrustFilePixelSize(kind: PixelSizeKind, file: FilePixelSize): string | null {
  if (!file.pixelSizeNm) return null;
  const x = file.pixelSizeNm.x;
  const what = `The ${LABEL[kind]} file's ${SOURCE[file.pixelSizeSource ?? ''] ?? 'metadata'} give ${fmtNm(x)} per pixel`;
  if (file.pixelSizeSource === 'resolution-tags') {
    const ppi = NM_PER_INCH / x;
    const dflt = DEFAULT_PPI.find((d) => Math.abs(ppi - d) / d < 1e-4);
    if (dflt) return `${what}, i.e. ${dflt} pixels per inch: a default that image programs write when the pixel size was never calibrated, so it was not used.`;
  }
  const { min, max } = PLAUSIBLE_PIXEL_NM[kind];
  if (!(x >= min && x <= max)) return `${what}, outside the plausible ${LABEL[kind]} range of ${fmtNm(min)} to ${fmtNm(max)}, so it was not used.`;
  return null;
}

/**
 * Chooses the pixel size for one image of a field.
 * A typed value always wins (a disagreement with the file is a warning); else the file's value is
 * used unless {@link distrustFilePixelSize} refuses it; else the field needs a typed value.
 * Non-square file pixels (X and Y differ by more than 1 %) are reported: only X is used.
 * @param typedNm - the value the person typed, in nm (undefined when left empty)
 */
export function choosePixelSize(kind: PixelSizeKind, file: FilePixelSize, typedNm?: number): PixelSizeChoice {
  const warnings: string[] = [];
  const label = LABEL[kind];
  const fromFile = file.pixelSizeNm;
  const distrust = distrustFilePixelSize(kind, file);
  if (fromFile && relDiff(fromFile.x, fromFile.y) > 0.01) {
    warnings.push(`The ${label} file's pixels are not square (X ${fmtNm(fromFile.x)}, Y ${fmtNm(fromFile.y)}); Heightlight uses one size for both axes${typedNm === undefined ? ', the X value' : ''}. Check the file.`);
  }
  if (typedNm !== undefined) {
    if (fromFile && relDiff(fromFile.x, typedNm) > 0.01) {
      const src = SOURCE[file.pixelSizeSource ?? ''] ?? 'metadata';
      warnings.push(`The ${label} pixel size you typed (${fmtNm(typedNm)}) differs from the file's ${fmtNm(fromFile.x)} (${src})${distrust ? ', which looks uncalibrated' : ''}; your value is used.`);
    }
    return { valueNm: typedNm, source: 'typed', error: null, warnings };
  }
  if (fromFile && !distrust) {
    return { valueNm: fromFile.x, source: file.pixelSizeSource === 'ome-xml' ? 'ome-xml' : 'resolution-tags', error: null, warnings };
  }
  const why = distrust ?? `The ${label} file does not state its pixel size.`;
  return { valueNm: null, source: null, error: `${why} Enter the ${label} pixel size in nm.`, warnings };
}
