import type { VesicleMarkerCall, VesicleRecord } from './types';

/** A cell of a per-vesicle table: a fixed-decimals number (`{ value, digits }`), an integer, text, or empty (null). */
export type VesicleCell = { readonly value: number; readonly digits: number } | number | string | null;

/** One column of the per-vesicle table. */
export interface VesicleColumn {
  /** Header name, e.g. `cap_base_diameter_nm` or `CD63_q`. */
  readonly name: string;
  /** Unit for people ('nm', 'counts', '' for dimensionless or text). */
  readonly unit: string;
  /** The column's cell for one vesicle. */
  readonly cell: (r: VesicleRecord) => VesicleCell;
}

const f = (value: number | null | undefined, digits: number): VesicleCell =>
  value === null || value === undefined || !Number.isFinite(value) ? null : { value, digits };

/**
 * The one per-vesicle column set of every export (command line, lab and collaborator exports), documented in
 * docs/vesicle-columns.md: index, positions, apex height, the tip-corrected spherical-cap sizes with their flag, the
 * split flag, the threshold footprint (named as such), then per marker the joint amplitude, its standard error, z
 * (amplitude / SE), z calibrated by the frame's null, the Benjamini–Hochberg q and the call (positive, negative,
 * not_measured), then out_of_frame and phenotype.
 * Numbers carry fixed decimals (q three significant digits), so equal results give byte-identical files; write
 * the cells with the product's CSV writer (lib/csv writeCsv), which escapes formula-like text such as a marker
 * name that starts with "+".
 *
 * @param markers - marker names in column order (the field's channel order); each record must call each
 * @returns the columns, in order
 * @throws RangeError for a repeated or empty marker name
 * @see docs/references.md §2 (cap sizes), §3 (tip correction), §7 (Benjamini–Hochberg q)
 */
export function vesicleColumns(markers: readonly string[]): readonly VesicleColumn[] {
  if (new Set(markers).size !== markers.length || markers.some((m) => m === '')) {
    throw new RangeError(`markers must be distinct, non-empty names, got ${JSON.stringify(markers)}`);
  }
  const columns: VesicleColumn[] = [
    { name: 'vesicle', unit: '', cell: (r) => r.index },
    { name: 'x_afm_px', unit: 'px', cell: (r) => f(r.xAfmPx, 3) },
    { name: 'y_afm_px', unit: 'px', cell: (r) => f(r.yAfmPx, 3) },
    { name: 'x_fl_px', unit: 'px', cell: (r) => f(r.xFlPx, 3) },
    { name: 'y_fl_px', unit: 'px', cell: (r) => f(r.yFlPx, 3) },
    { name: 'height_nm', unit: 'nm', cell: (r) => f(r.heightNm, 2) },
    { name: 'cap_base_diameter_nm', unit: 'nm', cell: (r) => f(r.cap && 2 * r.cap.baseRadiusNm, 2) },
    { name: 'cap_height_nm', unit: 'nm', cell: (r) => f(r.cap?.heightNm, 2) },
    { name: 'cap_contact_angle_deg', unit: 'deg', cell: (r) => f(r.cap?.contactAngleDeg, 2) },
    { name: 'cap_volume_nm3', unit: 'nm3', cell: (r) => f(r.cap?.volumeNm3, 0) },
    { name: 'cap_sphere_diameter_nm', unit: 'nm', cell: (r) => f(r.cap?.volumeEquivalentDiameterNm, 2) },
    { name: 'cap_flag', unit: '', cell: (r) => r.capFlag },
    { name: 'split', unit: '', cell: (r) => (r.split ? 1 : 0) },
    { name: 'footprint_diameter_nm', unit: 'nm', cell: (r) => f(r.footprintDiameterNm, 2) },
    { name: 'footprint_area_nm2', unit: 'nm2', cell: (r) => f(r.areaNm2, 0) },
    { name: 'footprint_volume_nm3', unit: 'nm3', cell: (r) => f(r.volumeNm3, 0) },
    { name: 'circularity', unit: '', cell: (r) => f(r.circularity, 3) },
  ];
  for (const m of markers) {
    // the call statistics are optional in records rebuilt from storage that did not keep them: empty cells then
    const call = (r: VesicleRecord): VesicleMarkerCall => {
      const c = r.markers[m];
      if (!c) throw new RangeError(`record ${r.index} has no call for marker ${m}`);
      return c;
    };
    columns.push(
      { name: `${m}_amplitude_counts`, unit: 'counts', cell: (r) => f(call(r).amplitudeCounts, 1) },
      { name: `${m}_amplitude_se_counts`, unit: 'counts', cell: (r) => f(call(r).amplitudeSeCounts, 1) },
      { name: `${m}_z`, unit: '', cell: (r) => f(call(r).z, 2) },
      { name: `${m}_z_calibrated`, unit: '', cell: (r) => f(call(r).zCalibrated, 2) },
      { name: `${m}_q`, unit: '', cell: (r) => significant(call(r).qValue, 3) },
      { name: `${m}_call`, unit: '', cell: (r) => callWord(call(r).positive) },
    );
  }
  columns.push(
    { name: 'out_of_frame', unit: '', cell: (r) => (r.outOfFrame ? 1 : 0) },
    { name: 'phenotype', unit: '', cell: (r) => r.phenotype },
  );
  return columns;
}

function callWord(positive: boolean | null): string {
  return positive === null ? 'not_measured' : positive ? 'positive' : 'negative';
}

/** A probability to `digits` significant digits (q-values span many decades), e.g. "0.0123", "3.40e-9". */
function significant(v: number | null | undefined, digits: number): string | null {
  if (v === null || v === undefined || !Number.isFinite(v)) return null;
  if (v === 0) return '0';
  return v >= 1e-4 ? String(Number(v.toPrecision(digits))) : v.toExponential(digits - 1);
}
