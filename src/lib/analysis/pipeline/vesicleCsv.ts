import type { VesicleRecord } from './types';

/** Fixed columns of {@link vesicleCsv}, before the per-marker columns. */
const GEOMETRY_COLUMNS = [
  'x_afm_px', 'y_afm_px', 'x_fl_px', 'y_fl_px', 'height_nm', 'diameter_nm', 'volume_nm3', 'area_nm2', 'circularity',
] as const;

/**
 * Writes vesicle records as CSV (RFC 4180, CRLF-free: lines end with \n). Columns: x_afm_px, y_afm_px, x_fl_px,
 * y_fl_px, height_nm, diameter_nm, volume_nm3, area_nm2, circularity, then for each marker `<marker>_intensity`
 * (net aperture counts), `<marker>_snr` (net counts over the background noise, dimensionless),
 * `<marker>_amplitude_counts` (joint NNLS amplitude: total counts of the vesicle's PSF, the value that is called)
 * and `<marker>` (1 positive, 0 negative, empty outside that frame), then out_of_frame (0/1)
 * and phenotype. Numbers have fixed decimals so equal results give byte-identical files.
 *
 * @param records - vesicle records from {@link analyzeField}; not modified
 * @param markers - marker names in column order; each record must carry a call for each
 * @returns the CSV text with a header line
 * @throws RangeError when a record lacks a marker
 * @see RFC 4180 (quoting of fields that hold commas, quotes or line breaks)
 */
export function vesicleCsv(records: readonly VesicleRecord[], markers: readonly string[]): string {
  const lines = [vesicleCsvColumns(markers).map(csvField).join(',')];
  for (const r of records) lines.push(vesicleCsvCells(r, markers).map(cellText).join(','));
  return `${lines.join('\n')}\n`;
}

/**
 * Column names of {@link vesicleCsv}, with `extra` columns appended (the web export adds the field,
 * sample and transform identifiers). Hand them to the product's CSV writer (lib/csv writeCsv), which
 * escapes formula-like names such as a marker called `+1-1`.
 */
export function vesicleCsvColumns(markers: readonly string[], extra: readonly string[] = []): string[] {
  return [...GEOMETRY_COLUMNS, ...markers.flatMap((m) => [`${m}_intensity`, `${m}_snr`, `${m}_amplitude_counts`, m]), 'out_of_frame', 'phenotype', ...extra];
}

/**
 * The cells of one vesicle for {@link vesicleCsvColumns}: numbers as `{ value, digits }` (fixed decimals,
 * the shape lib/csv writeCsv prints), text as strings, null for empty; `extra` values appended.
 */
export function vesicleCsvCells(r: VesicleRecord, markers: readonly string[], extra: readonly string[] = []): VesicleCsvCell[] {
  const cells: VesicleCsvCell[] = [
    f(r.xAfmPx, 3), f(r.yAfmPx, 3), f(r.xFlPx, 3), f(r.yFlPx, 3),
    f(r.heightNm, 2), f(r.diameterNm, 2), f(r.volumeNm3, 0), f(r.areaNm2, 0), f(r.circularity, 3),
  ];
  for (const m of markers) {
    const call = r.markers[m];
    if (!call) throw new RangeError(`record ${r.index} has no call for marker ${m}`);
    cells.push(call.intensityCounts === null ? null : f(call.intensityCounts, 1));
    cells.push(call.intensitySnr === null ? null : f(call.intensitySnr, 2));
    cells.push(call.amplitudeCounts === null ? null : f(call.amplitudeCounts, 1));
    cells.push(call.positive === null ? null : call.positive ? '1' : '0');
  }
  cells.push(r.outOfFrame ? '1' : '0', r.phenotype, ...extra);
  return cells;
}

/** A cell of {@link vesicleCsvCells}: a fixed-decimals number, text or empty. */
export type VesicleCsvCell = { readonly value: number; readonly digits: number } | string | null;

const f = (value: number, digits: number) => ({ value, digits });

function cellText(c: VesicleCsvCell): string {
  if (c === null) return '';
  if (typeof c === 'string') return csvField(c);
  return fixed(c.value, c.digits);
}

function fixed(v: number, digits: number): string {
  if (!Number.isFinite(v)) return '';
  const s = v.toFixed(digits);
  // "-0.000" reads as a sign error; print zero plainly
  return Number(s) === 0 ? (0).toFixed(digits) : s;
}

function csvField(v: string): string {
  return /[",\n\r]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
}
