import { describe, expect, it } from 'vitest';
import { writeCsv } from '../../../csv';
import { mergeSpots, parseFiducialCsv, vesicleCsvTable, type VesicleRecord } from '..';

const record = (over: Partial<VesicleRecord> = {}): VesicleRecord => ({
  index: 0, xAfmPx: 10.12345, yAfmPx: 20, xFlPx: 1.5, yFlPx: -0.0001, heightNm: 12.345, footprintDiameterNm: 80.5,
  volumeNm3: 41234.6, areaNm2: 5089.4, circularity: 0.98765, meanHeightNm: 6.1,
  cap: { baseRadiusNm: 50, heightNm: 20, contactAngleDeg: 43.6028, volumeNm3: 82728.61, volumeEquivalentDiameterNm: 54.0611 },
  capFlag: null, split: false, outOfFrame: false, phenotype: 'CD9+ CD63-',
  markers: {
    CD9: { intensityCounts: 512.25, intensitySnr: 9, amplitudeCounts: 600, amplitudeSeCounts: 48.21, z: 12.446, zCalibrated: 11.9, qValue: 3.4e-12, spotDistancePx: 0.2, positive: true },
    CD63: { intensityCounts: -3.04, intensitySnr: -0.1, amplitudeCounts: 0, amplitudeSeCounts: 50, z: -0.004, zCalibrated: -0.3, qValue: 0.61234, spotDistancePx: null, positive: false },
  },
  ...over,
});

const csv = (records: VesicleRecord[], markers: string[]) => writeCsv({ ...vesicleCsvTable(records, markers), lineEnding: '\n' });

describe('vesicle CSV columns', () => {
  it('writes the documented column set: cap sizes and flag, footprint, per-marker amplitude, SE, z, q and call', () => {
    // Column set of docs/vesicle-columns.md. Cap numbers are the docs/references.md §2 cap (a = 50, h = 20 nm).
    const outside = record({
      index: 1, outOfFrame: true, phenotype: 'CD9? CD63?', cap: null, capFlag: 'overhang', split: true,
      markers: {
        CD9: { intensityCounts: null, intensitySnr: null, amplitudeCounts: null, spotDistancePx: null, positive: null },
        CD63: { intensityCounts: null, intensitySnr: null, amplitudeCounts: null, spotDistancePx: null, positive: null },
      },
    });
    const lines = csv([record(), outside], ['CD9', 'CD63']).split('\n');
    expect(lines[0]).toBe(
      'vesicle,x_afm_px,y_afm_px,x_fl_px,y_fl_px,height_nm,cap_base_diameter_nm,cap_height_nm,cap_contact_angle_deg,cap_volume_nm3,' +
        'cap_sphere_diameter_nm,cap_flag,split,footprint_diameter_nm,footprint_area_nm2,footprint_volume_nm3,circularity,' +
        'CD9_amplitude_counts,CD9_amplitude_se_counts,CD9_z,CD9_z_calibrated,CD9_q,CD9_call,' +
        'CD63_amplitude_counts,CD63_amplitude_se_counts,CD63_z,CD63_z_calibrated,CD63_q,CD63_call,' +
        'out_of_frame,phenotype',
    );
    // −0.0001 and −0.004 round to zero and are written without a minus sign; q keeps three significant digits
    expect(lines[1]).toBe('0,10.123,20.000,1.500,0.000,12.35,100.00,20.00,43.60,82729,54.06,,0,80.50,5089,41235,0.988,600.0,48.2,12.45,11.90,3.40e-12,positive,0.0,50.0,0.00,-0.30,0.612,negative,0,CD9+ CD63-');
    expect(lines[2]).toBe('1,10.123,20.000,1.500,0.000,12.35,,,,,,overhang,1,80.50,5089,41235,0.988,,,,,,not_measured,,,,,,not_measured,1,CD9? CD63?');
    expect(lines[3]).toBe('');
    expect(lines).toHaveLength(4);
  });

  it('quotes fields with commas or quotes (RFC 4180), escapes formula-like marker names and refuses a missing marker', () => {
    const text = csv([record({ phenotype: 'a,"b"' })], ['CD9', 'CD63']);
    expect(text.trim().endsWith(',"a,""b"""')).toBe(true);
    // OWASP CSV injection guidance (docs/references.md §11): a header cell starting with "+" gets an apostrophe
    const odd = record({ markers: { '+CD9': record().markers.CD9 } });
    expect(csv([odd], ['+CD9']).split('\n')[0]).toContain(",'+CD9_amplitude_counts,");
    expect(() => csv([record()], ['CD81'])).toThrow(RangeError);
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
