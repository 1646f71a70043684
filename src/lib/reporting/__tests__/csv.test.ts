import { describe, it, expect } from 'vitest';
import { csvCell, csvRow, safeFileName } from '../csv';

// Quoting follows RFC 4180 §2; the apostrophe prefix against formula injection is common practice (OWASP "CSV Injection").
describe('csv', () => {
  it('quotes commas, quotes and line breaks (RFC 4180)', () => {
    expect(csvRow(['a,b', 'say "hi"', 'x\ny', 1.5, null])).toBe('"a,b","say ""hi""","x\ny",1.5,\r\n');
  });
  it('neutralises cells a spreadsheet would run as formulas, but not numbers', () => {
    expect(csvCell('=HYPERLINK("x")')).toBe(`"'=HYPERLINK(""x"")"`);
    expect(csvCell('-5+3')).toBe("'-5+3");
    expect(csvCell(-5)).toBe('-5');
    expect(csvCell(Number.NaN)).toBe('');
    expect(csvCell(true)).toBe('1');
  });
  it('makes header-safe file names', () => {
    expect(safeFileName('HCP 001/..;"x".csv')).toBe('HCP_001_.._x_.csv');
  });
});
