import { describe, it, expect } from 'vitest';
import { looksIdentifying } from '../looksIdentifying';

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
