import { describe, it, expect } from 'vitest';
import { vesicleRecordFromRow, type StoredVesicle } from '../vesicleRecord';
import { vesicleCsvColumns, vesicleCsvCells } from '../../../analysis/pipeline';
import { writeCsv } from '../../../csv';

const markers = ['CD9', 'CD63', 'CD81'];
// one stored vesicle: CD9 positive, CD63 negative, CD81 outside its frame (as linking writes them)
const row: StoredVesicle = {
  index: 4, xAfmPx: 101.25, yAfmPx: 57.5, xFlPx: 30.125, yFlPx: 12.5, heightNm: 21.4, meanHeightNm: 9.1, areaNm2: 9503, diameterNm: 110, volumeNm3: 101000, circularity: 0.93,
  capRadiusNm: 41.5, capHeightNm: 20.9, contactAngleDeg: 53.5, capVolumeNm3: 61300, sphereDiameterNm: 48.9, capFlag: null, split: true, outOfFrame: true,
  markerBits: 0b001, measuredBits: 0b011, phenotype: 'CD9+ CD63- CD81?',
  markers: [
    { intensity: 812, snr: 14.2, amplitude: 905.5, spotDistancePx: 0.4, se: 52.5, z: 17.25, zCalibrated: 16.9, p: 1e-12, q: 3.4e-11, call: 'positive' },
    { intensity: 40, snr: 0.8, amplitude: 31.5, spotDistancePx: null, se: 50, z: 0.63, zCalibrated: 0.41, p: 0.34, q: 0.61, call: 'negative' },
    { intensity: null, snr: null, amplitude: null, spotDistancePx: null, se: null, z: null, p: null, q: null, call: 'not_measured' },
  ],
};

describe('vesicleRecordFromRow and the per-vesicle export cells', () => {
  it('writes the stored call, amplitude, SE, z and q of each marker, and the cap sizes', () => {
    const header = vesicleCsvColumns(markers);
    const text = writeCsv({ header, rows: [vesicleCsvCells(vesicleRecordFromRow(row, markers), markers)], lineEnding: '\n' });
    const [names, cells] = text.trim().split('\n').map((l) => l.split(','));
    const at = (name: string) => cells[names.indexOf(name)];
    expect([at('CD9_call'), at('CD63_call'), at('CD81_call')]).toEqual(['positive', 'negative', 'not_measured']);
    expect([at('CD9_amplitude_counts'), at('CD9_amplitude_se_counts'), at('CD9_z'), at('CD9_q')]).toEqual(['905.5', '52.5', '17.25', '3.40e-11']);
    expect([at('CD81_amplitude_counts'), at('CD81_z'), at('CD81_q')]).toEqual(['', '', '']);
    // 2 × the stored base radius; the footprint stays under its own name
    expect([at('cap_base_diameter_nm'), at('cap_volume_nm3'), at('footprint_diameter_nm'), at('split')]).toEqual(['83.00', '61300', '110.00', '1']);
  });

  it('reads rows linked before calls were stored from their measured and positive bits', () => {
    const old: StoredVesicle = {
      ...row, capHeightNm: null, capVolumeNm3: null, split: false,
      markers: row.markers.map(({ intensity, snr, amplitude, spotDistancePx }) => ({ intensity, snr, amplitude, spotDistancePx })),
    };
    const r = vesicleRecordFromRow(old, markers);
    expect(markers.map((m) => r.markers[m].positive)).toEqual([true, false, null]);
    expect(r.markers.CD9.amplitudeSeCounts).toBeNull();
  });
});
