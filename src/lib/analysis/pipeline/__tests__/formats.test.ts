import { describe, expect, it } from 'vitest';
import { mergeSpots, parseFiducialCsv, vesicleCsv, type VesicleRecord } from '..';

const record = (over: Partial<VesicleRecord> = {}): VesicleRecord => ({
  index: 0, xAfmPx: 10.12345, yAfmPx: 20, xFlPx: 1.5, yFlPx: -0.0001, heightNm: 12.345, diameterNm: 80.5,
  volumeNm3: 41234.6, areaNm2: 5089.4, circularity: 0.98765, meanHeightNm: 6.1, cap: null, outOfFrame: false, phenotype: 'CD9+ CD63-',
  markers: {
    CD9: { intensityCounts: 512.25, intensitySnr: 9, amplitudeCounts: 600, spotDistancePx: 0.2, positive: true },
    CD63: { intensityCounts: -3.04, intensitySnr: -0.1, amplitudeCounts: 0, spotDistancePx: null, positive: false },
  },
  ...over,
});

describe('vesicleCsv', () => {
  it('writes the header, fixed decimals, 0/1 calls and empty cells outside the frame', () => {
    const outside = record({
      outOfFrame: true, phenotype: 'CD9? CD63?',
      markers: {
        CD9: { intensityCounts: null, intensitySnr: null, amplitudeCounts: null, spotDistancePx: null, positive: null },
        CD63: { intensityCounts: null, intensitySnr: null, amplitudeCounts: null, spotDistancePx: null, positive: null },
      },
    });
    const lines = vesicleCsv([record(), outside], ['CD9', 'CD63']).split('\n');
    expect(lines[0]).toBe(
      'x_afm_px,y_afm_px,x_fl_px,y_fl_px,height_nm,diameter_nm,volume_nm3,area_nm2,circularity,CD9_intensity,CD9_snr,CD9_amplitude_counts,CD9,CD63_intensity,CD63_snr,CD63_amplitude_counts,CD63,out_of_frame,phenotype',
    );
    // −0.0001 rounds to 0.000, written without a minus sign; the called amplitude follows each SNR (1 decimal)
    expect(lines[1]).toBe('10.123,20.000,1.500,0.000,12.35,80.50,41235,5089,0.988,512.3,9.00,600.0,1,-3.0,-0.10,0.0,0,0,CD9+ CD63-');
    expect(lines[2]).toBe('10.123,20.000,1.500,0.000,12.35,80.50,41235,5089,0.988,,,,,,,,,1,CD9? CD63?');
    expect(lines[3]).toBe('');
    expect(lines).toHaveLength(4);
  });

  it('quotes fields with commas or quotes (RFC 4180) and refuses a missing marker', () => {
    const text = vesicleCsv([record({ phenotype: 'a,"b"' })], ['CD9', 'CD63']);
    expect(text.trim().endsWith(',"a,""b"""')).toBe(true);
    expect(() => vesicleCsv([record()], ['CD81'])).toThrow(RangeError);
  });
});

describe('parseFiducialCsv', () => {
  it('reads pairs, skipping blank lines, a BOM and spaces', () => {
    const pairs = parseFiducialCsv('\uFEFFafm_x, afm_y ,fluor_x,fluor_y\r\n1,2,3.5,4e1\n\n -5 ,6,7,8\n');
    expect(pairs).toEqual([
      { afm: { x: 1, y: 2 }, fl: { x: 3.5, y: 40 } },
      { afm: { x: -5, y: 6 }, fl: { x: 7, y: 8 } },
    ]);
  });

  it.each([
    ['', /line 1: the file is empty/],
    ['x,y,u,v\n1,2,3,4', /line 1: the header is "x,y,u,v"; expected exactly afm_x,afm_y,fluor_x,fluor_y/],
    ['afm_x,afm_y,fluor_x,fluor_y\n1,2,3', /line 2: expected 4 values .* found 3/],
    ['afm_x,afm_y,fluor_x,fluor_y\n1,2,3,4\n1,two,3,4', /line 3: afm_y is "two", not a number/],
    ['afm_x,afm_y,fluor_x,fluor_y\n1,2,,4', /line 2: fluor_x is "", not a number/],
  ])('refuses %j with a message naming the line', (text, message) => {
    expect(() => parseFiducialCsv(text)).toThrow(expect.objectContaining({ code: 'malformed_fiducial_csv', message: expect.stringMatching(message) }));
  });
});

describe('mergeSpots', () => {
  it('joins spots of different channels within the radius into their mean and keeps the others', () => {
    const merged = mergeSpots([[{ x: 10, y: 10 }, { x: 30, y: 5 }], [{ x: 11, y: 10 }, { x: 50, y: 50 }], [{ x: 10.5, y: 11.5 }]], 1.5);
    expect(merged).toHaveLength(3);
    expect(merged[0].x).toBeCloseTo(31.5 / 3, 12);
    expect(merged[0].y).toBeCloseTo(31.5 / 3, 12);
    expect(merged.slice(1)).toEqual([{ x: 30, y: 5 }, { x: 50, y: 50 }]);
    expect(() => mergeSpots([], -1)).toThrow(RangeError);
  });
});
