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
  const lines = [vesicleCsvHeader(markers)];
  for (const r of records) lines.push(vesicleCsvRow(r, markers));
  return `${lines.join('\n')}\n`;
}

/**
 * The header line of {@link vesicleCsv}, with `extra` columns appended (the web export adds the
 * field, sample and transform identifiers). No line break.
 */
export function vesicleCsvHeader(markers: readonly string[], extra: readonly string[] = []): string {
  return [...GEOMETRY_COLUMNS, ...markers.flatMap((m) => [`${m}_intensity`, `${m}_snr`, `${m}_amplitude_counts`, m]), 'out_of_frame', 'phenotype', ...extra].map(csvField).join(',');
}

/** One data line of {@link vesicleCsv} (no line break), with `extra` values appended. */
export function vesicleCsvRow(r: VesicleRecord, markers: readonly string[], extra: readonly string[] = []): string {
  const cells = [
    fixed(r.xAfmPx, 3), fixed(r.yAfmPx, 3), fixed(r.xFlPx, 3), fixed(r.yFlPx, 3),
    fixed(r.heightNm, 2), fixed(r.diameterNm, 2), fixed(r.volumeNm3, 0), fixed(r.areaNm2, 0), fixed(r.circularity, 3),
  ];
  for (const m of markers) {
    const call = r.markers[m];
    if (!call) throw new RangeError(`record ${r.index} has no call for marker ${m}`);
    cells.push(call.intensityCounts === null ? '' : fixed(call.intensityCounts, 1));
    cells.push(call.intensitySnr === null ? '' : fixed(call.intensitySnr, 2));
    cells.push(call.amplitudeCounts === null ? '' : fixed(call.amplitudeCounts, 1));
    cells.push(call.positive === null ? '' : call.positive ? '1' : '0');
  }
  cells.push(r.outOfFrame ? '1' : '0', r.phenotype, ...extra);
  return cells.map(csvField).join(',');
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
