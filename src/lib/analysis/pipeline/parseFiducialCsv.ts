import { AnalysisError } from '../errors';
import type { FiducialPair } from '../geometry';

const HEADER = ['afm_x', 'afm_y', 'fluor_x', 'fluor_y'];

/**
 * Reads fiducial pairs from CSV text with the header `afm_x,afm_y,fluor_x,fluor_y`: pixels, x = column, y = row,
 * (0, 0) the centre of the top-left pixel. Blank lines are skipped; every other line needs four finite numbers.
 *
 * @param text - the file's text (a UTF-8 byte-order mark is ignored)
 * @returns the pairs in file order
 * @throws AnalysisError `malformed_fiducial_csv` naming the line and what is wrong
 */
export function parseFiducialCsv(text: string): FiducialPair[] {
  const lines = text.replace(/^\uFEFF/, '').split(/\r?\n/);
  const fail = (line: number, what: string): never => {
    throw new AnalysisError('malformed_fiducial_csv', `Fiducial CSV line ${line}: ${what}`, { line });
  };
  const first = lines.findIndex((l) => l.trim() !== '');
  if (first < 0) fail(1, `the file is empty; expected the header ${HEADER.join(',')}`);
  const header = lines[first].split(',').map((h) => h.trim().toLowerCase());
  if (header.length !== 4 || header.some((h, i) => h !== HEADER[i])) {
    fail(first + 1, `the header is "${lines[first].trim()}"; expected exactly ${HEADER.join(',')}`);
  }
  const pairs: FiducialPair[] = [];
  for (let i = first + 1; i < lines.length; i++) {
    if (lines[i].trim() === '') continue;
    const cells = lines[i].split(',').map((c) => c.trim());
    if (cells.length !== 4) fail(i + 1, `expected 4 values (${HEADER.join(',')}), found ${cells.length}: "${lines[i].trim()}"`);
    const values = cells.map((c) => (c === '' ? Number.NaN : Number(c)));
    const bad = values.findIndex((v) => !Number.isFinite(v));
    if (bad >= 0) fail(i + 1, `${HEADER[bad]} is "${cells[bad]}", not a number`);
    pairs.push({ afm: { x: values[0], y: values[1] }, fl: { x: values[2], y: values[3] } });
  }
  return pairs;
}
