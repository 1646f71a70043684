import { describe, it, expect } from 'vitest';
import { looksIdentifying } from '../looksIdentifying';
import { personalNames } from '../personalNames';

// The cases are invented; the rule (no names, initials or dates of birth in sample codes) is common practice
// for de-identified research samples.
const codes = (r: ReturnType<typeof looksIdentifying>) => r.reasons.map((x) => x.code);

describe('looksIdentifying', () => {
  it.each(['HCP-001', 'HCP-ISO', 'P07-V2', 'CTRL-12', 'plasma pool 3', 'S2026-014', 'healthy control 4', 'ISO-CD9', 'B12-W3'])(
    'accepts the de-identified code %s', (code) => {
      expect(looksIdentifying(code)).toEqual({ identifying: false, reasons: [] });
    });

  it.each(['1980-03-12', 'P-12/03/1980', 'pt_19800312', '12.3.80', '12Mar1980', 'March-12', '03-mar-80', '29-02-2000'])(
    'flags the date-like code %s', (code) => {
      expect(codes(looksIdentifying(code))).toContain('date_like');
    });

  it('rejects impossible dates as dates (no false alarm for 31-02-1990 or 20261399)', () => {
    expect(codes(looksIdentifying('31-02-1990'))).not.toContain('date_like');
    expect(codes(looksIdentifying('S-20261399'))).not.toContain('date_like');
    // 2001 is not a leap year
    expect(codes(looksIdentifying('29-02-2001'))).not.toContain('date_like');
  });

  it.each(['Jane Doe', 'doe_jane', 'Smith, J', 'J. Smith', 'Okafor M', 'Maria Lindqvist 01'])('flags the name-like code %s', (code) => {
    expect(codes(looksIdentifying(code))).toContain('name_like');
  });

  it('reports both reasons for a name with a date of birth and gives an actionable message', () => {
    const r = looksIdentifying('Jane Doe 1980-03-12');
    expect(r.identifying).toBe(true);
    expect(codes(r).sort()).toEqual(['date_like', 'name_like']);
    expect(r.reasons.find((x) => x.code === 'name_like')!.message).toMatch(/de-identified code/);
  });
});

// What labs leak in practice (common practice of de-identification reviews; the examples are invented): record
// and hospital numbers, initials, names in any case, and full dates, in codes and in free text.
describe('looksIdentifying: record numbers, initials, names in any case, full dates', () => {
  const withNames = (text: string, kind: 'code' | 'text' = 'text') => codes(looksIdentifying(text, { kind, what: 'The notes', findNames: personalNames }));

  it.each(['HC-03', 'PDAC-12', 'ISO-1', 'BUF-1', 'HCP-001', 'P07-V2', 'S2026-014', 'CTRL-12'])('lets the de-identified code %s pass, with the name lexicon too', (code) => {
    expect(looksIdentifying(code, { findNames: personalNames })).toEqual({ identifying: false, reasons: [] });
  });

  it.each(['healthy control', 'pancreatic cancer', 'isotype control', 'buffer only', 'plasma', 'size-exclusion chromatography', 'field 1', 'grid A1',
    'Spun 10 min at 2500 g, SEC fraction 7-9, collected March 2026', 'Triton-lysed EVs as a check', 'week 4 post treatment, baseline visit'])(
    'lets the lab text "%s" pass', (text) => {
      expect(withNames(text)).toEqual([]);
    });

  it.each(['MRN 00123456', 'Hosp no 4471-223', 'hospital number: 556 2231', 'NHS 943 476 5919', 'pt ID 5581234', 'UR no. 334455', 'HC-0012345678', 'chart #88213'])(
    'flags the record number in %s', (text) => {
      expect(withNames(text)).toContain('record_number');
    });

  it.each(['J.D.', 'pt J.D. plasma', 'A. B.', 'initials JD', 'donor KM', 'Mrs K', 'JD1975', 'AB-1964'])('flags the initials in %s', (text) => {
    expect(withNames(text)).toContain('initials');
  });

  it.each(['jane doe', 'JANE DOE', 'Doe, Jane', 'from Mrs Patel', 'kevin o\'brien plasma', 'nguyen lan'])('flags the name in "%s" whatever its case', (text) => {
    expect(withNames(text)).toContain('name_like');
  });

  it('reads names run together by separators in codes and file names (doe_jane, MUELLER-ANNA)', () => {
    expect(withNames('doe_jane', 'code')).toContain('name_like');
    expect(withNames('MUELLER-ANNA-03')).toContain('name_like');
  });

  it.each(['born 12 March 1961', 'DOB 03/04/1958', 'collected 2026-03-14', '14th of March', 'sample_1961-03-12.tif'])('flags the full date in "%s"', (text) => {
    expect(withNames(text)).toContain('date_like');
  });

  it('keeps a month with its year (collection months are allowed) and names the text in its message', () => {
    expect(withNames('collected March 2026')).toEqual([]);
    expect(withNames('2026-03')).toEqual([]);
    const r = looksIdentifying('MRN 00123456', { what: 'The group label', kind: 'text' });
    expect(r.reasons[0].message).toMatch(/^The group label contains what looks like a medical record/);
  });
});
