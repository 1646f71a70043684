/** CSV writing for exports: RFC 4180 quoting plus a guard against spreadsheet formula injection. */

/** First line of every export. */
export const RESEARCH_USE_LINE = '# Research use only. Not for diagnosis or treatment decisions.';

export type CsvValue = string | number | boolean | null | undefined;

/**
 * One CSV cell. Numbers are written as is (NaN/±∞ and null → empty); text that a spreadsheet would
 * run as a formula (starts with = + - @ or a tab) gets a leading apostrophe (common practice, OWASP
 * "CSV injection"); text with a comma, quote or line break is quoted.
 *
 * @param value - the cell value
 * @returns the encoded cell
 */
export function csvCell(value: CsvValue): string {
  if (value === null || value === undefined) return '';
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : '';
  if (typeof value === 'boolean') return value ? '1' : '0';
  let s = value;
  if (/^[=+\-@\t\r]/.test(s)) s = `'${s}`;
  return /[",\r\n]/.test(s) ? `"${s.replaceAll('"', '""')}"` : s;
}

/**
 * One CSV line (with its CRLF terminator, as RFC 4180 asks).
 *
 * @param values - the cells in column order
 * @returns the encoded line
 */
export function csvRow(values: readonly CsvValue[]): string {
  return values.map(csvCell).join(',') + '\r\n';
}

/**
 * A file name safe for a Content-Disposition header (letters, digits, dot, dash, underscore).
 *
 * @param name - wanted name
 * @returns the sanitised name
 */
export function safeFileName(name: string): string {
  return name.replace(/[^A-Za-z0-9._-]+/g, '_').slice(0, 120) || 'export';
}
