import type { VesicleRecord } from './types';
import { vesicleColumns, type VesicleCell } from './vesicleColumns';

/** A cell of {@link vesicleCsvCells}: a fixed-decimals number, an integer, text or empty. */
export type VesicleCsvCell = VesicleCell;

/**
 * Column names of the per-vesicle CSV ({@link vesicleColumns}, documented in docs/vesicle-columns.md), with `extra`
 * columns appended (the web export adds the field, sample and transform identifiers). Hand them to the product's
 * CSV writer (lib/csv writeCsv), which escapes formula-like names such as a marker called `+1-1`.
 *
 * @param markers - marker names in column order
 * @param extra - further column names, appended
 * @returns the header names
 */
export function vesicleCsvColumns(markers: readonly string[], extra: readonly string[] = []): string[] {
  return [...vesicleColumns(markers).map((c) => c.name), ...extra];
}

/**
 * The cells of one vesicle for {@link vesicleCsvColumns}: numbers as `{ value, digits }` (fixed decimals, the shape
 * lib/csv writeCsv prints), text as strings, null for empty; `extra` values appended.
 *
 * @param r - one vesicle record; not modified
 * @param markers - marker names in column order; the record must carry a call for each
 * @param extra - further cells, appended
 * @returns the cells
 * @throws RangeError when the record lacks a marker
 */
export function vesicleCsvCells(r: VesicleRecord, markers: readonly string[], extra: readonly string[] = []): VesicleCsvCell[] {
  return [...vesicleColumns(markers).map((c) => c.cell(r)), ...extra];
}

/**
 * Header and rows of a whole table, for lib/csv writeCsv (`writeCsv({ comments, ...vesicleCsvTable(...) })`).
 *
 * @param records - vesicle records from analyzeField; not modified
 * @param markers - marker names in column order
 * @returns the header names and one row of cells per record
 * @throws RangeError when a record lacks a marker
 */
export function vesicleCsvTable(records: readonly VesicleRecord[], markers: readonly string[]): { header: string[]; rows: VesicleCsvCell[][] } {
  const columns = vesicleColumns(markers);
  return { header: columns.map((c) => c.name), rows: records.map((r) => columns.map((c) => c.cell(r))) };
}
