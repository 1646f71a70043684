/** CSV helpers of the reports; all writing goes through the one writer in lib/csv (formula-escaping, RFC 4180). */
import { writeCsv, RESEARCH_USE_COMMENT, type CsvCell } from '../csv';

/** First line of every export. */
export const RESEARCH_USE_LINE = `# ${RESEARCH_USE_COMMENT}`;

export type CsvValue = CsvCell;

/**
 * One CSV cell (see {@link writeCsv}: formula-like text gets a leading apostrophe, numbers stay numbers).
 *
 * @param value - the cell value
 * @returns the encoded cell
 */
export function csvCell(value: CsvValue): string {
  return writeCsv({ rows: [[value]], lineEnding: '\n' }).slice(0, -1);
}

/**
 * One CSV line (with its CRLF terminator, as RFC 4180 asks).
 *
 * @param values - the cells in column order
 * @returns the encoded line
 */
export function csvRow(values: readonly CsvValue[]): string {
  return writeCsv({ rows: [values] });
}

/**
 * `# ` comment lines (each with its CRLF), escaped by the writer.
 *
 * @param comments - the comment texts
 * @returns the encoded lines
 */
export function csvComments(comments: readonly string[]): string {
  return writeCsv({ comments });
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
