/**
 * The one CSV writer of the product (every export, the command line, summaries and comparisons).
 * Pure: cells in, text out. Quoting is csv-stringify's (RFC 4180); every text cell, header name and
 * comment line is guarded against spreadsheet formula injection: text that starts with = + - @, a tab
 * or a carriage return (or their full-width forms) gets a leading apostrophe, as the OWASP
 * "CSV Injection" guidance asks (docs/references.md §11). Numbers stay numbers, negative ones included.
 */
import { stringify } from 'csv-stringify/sync';

/** The research-use caution every export starts with (written as a `# ` comment line). */
export const RESEARCH_USE_COMMENT = 'Research use only. Not for diagnosis or treatment decisions.';

/**
 * A number written with a fixed number of decimals (so equal results give byte-identical files).
 * Build it with {@link csvFixed}; a plain object of this shape works too (the pure analysis core
 * returns these without importing this module).
 */
export interface CsvFixed {
  readonly value: number;
  readonly digits: number;
}

/** One cell: text (escaped), a number (NaN and ±∞ → empty), a fixed-decimals number, a flag (1/0) or empty. */
export type CsvCell = string | number | boolean | CsvFixed | null | undefined;

export interface WriteCsvInput {
  /** Comment lines written first, each as `# <text>`; line breaks and tabs become spaces. */
  readonly comments?: readonly string[];
  /** Column names (escaped like text cells). Leave out to write rows only (a later page of a stream). */
  readonly header?: readonly string[];
  /** Data rows, cells in column order. */
  readonly rows?: Iterable<readonly CsvCell[]>;
  /**
   * Line terminator.
   * @default '\r\n' (RFC 4180)
   */
  readonly lineEnding?: '\r\n' | '\n';
}

/**
 * @param value - the number
 * @param digits - decimals to print
 * @returns a cell that prints `value.toFixed(digits)` (−0 printed as 0, NaN and ±∞ as empty)
 */
export function csvFixed(value: number, digits: number): CsvFixed {
  return { value, digits };
}

// Characters a spreadsheet reads as the start of a formula (OWASP), the full-width forms included.
const FORMULA_START = /^[=+\-@\t\r\uFF1D\uFF0B\uFF0D\uFF20]/;

/**
 * Writes comments, header and rows as CSV text, each line ending with `lineEnding`.
 *
 * @param input - see {@link WriteCsvInput}
 * @returns the CSV text ('' when there is nothing to write)
 */
export function writeCsv(input: WriteCsvInput): string {
  const { comments = [], header, rows = [], lineEnding = '\r\n' } = input;
  let out = '';
  for (const c of comments) out += commentLine(c) + lineEnding;
  const records: CsvCell[][] = [];
  if (header) records.push([...header]);
  for (const r of rows) records.push([...r]);
  if (!records.length) return out;
  return out + stringify(records, {
    record_delimiter: lineEnding === '\n' ? 'unix' : 'windows',
    escape_formulas: true,
    // csv-stringify quotes only the configured record delimiter; a lone \n or \r must be quoted too (RFC 4180 §2.6)
    quoted_match: /[\r\n]/,
    cast: {
      number: (v) => (Number.isFinite(v) ? String(v) : ''),
      boolean: (v) => (v ? '1' : '0'),
      object: (v) => fixedText(v as unknown as CsvFixed),
    },
  });
}

function fixedText(cell: CsvFixed): { value: string; escape_formulas: boolean } | string {
  if (typeof cell?.value !== 'number' || typeof cell.digits !== 'number') {
    throw new TypeError(`a CSV cell object must be {value: number, digits: number}, got ${JSON.stringify(cell)}`);
  }
  if (!Number.isFinite(cell.value)) return '';
  const s = cell.value.toFixed(cell.digits);
  // "-0.000" reads as a sign error; print zero plainly. A number's minus sign is not a formula.
  return { value: Number(s) === 0 ? (0).toFixed(cell.digits) : s, escape_formulas: false };
}

/**
 * One `# ` comment line. A spreadsheet splits it at commas into cells, so every piece that would
 * start a cell with a formula character (or a quote, which opens a quoted cell) gets the apostrophe.
 */
function commentLine(text: string): string {
  const flat = text.replace(/^#\s?/, '').replace(/[\r\n\t]+/g, ' ');
  const pieces = `# ${flat}`.split(',').map((p, i) => {
    if (i === 0) return p;
    const lead = /^ */.exec(p)![0];
    const rest = p.slice(lead.length);
    return FORMULA_START.test(rest) || rest.startsWith('"') ? `${lead}'${rest}` : p;
  });
  return pieces.join(',');
}
