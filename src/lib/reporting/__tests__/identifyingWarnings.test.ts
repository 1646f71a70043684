import { describe, it, expect } from 'vitest';
import { identifyingWarnings } from '../identifyingWarnings';

// Invented examples of what reaches collaborators and exports through free text (common practice of
// de-identification reviews): each finding is named by the field it came from; clean texts give nothing.
describe('identifyingWarnings', () => {
  it('names the field of each finding, in order, and lets clean lab text pass', () => {
    const w = identifyingWarnings([
      { what: 'The code', value: 'PDAC-12', kind: 'code' },
      { what: 'The group label', value: 'pancreatic cancer' },
      { what: 'The notes', value: 'Drawn at clinic, MRN 00123456' },
      { what: 'The source', value: 'plasma from Mrs Patel' },
      { what: 'The field name', value: 'grid A1' },
      { what: 'The file name "JD_1961-03-12_scan3"', value: 'JD_1961-03-12_scan3' },
    ]);
    expect(w).toHaveLength(4);
    expect(w[0]).toMatch(/^The notes contains what looks like a medical record/);
    expect(w[1]).toMatch(/^The source looks like it contains a person's name \(.*Patel\)/);
    expect(w[2]).toMatch(/^The file name "JD_1961-03-12_scan3" contains something that looks like a full date/);
    expect(w[3]).toMatch(/^The file name "JD_1961-03-12_scan3" contains what look like a person's initials/);
  });

  it('gives nothing for empty or missing texts', () => {
    expect(identifyingWarnings([{ what: 'The notes', value: '' }, { what: 'The source', value: null }, { what: 'The dilution', value: undefined }])).toEqual([]);
  });
});
