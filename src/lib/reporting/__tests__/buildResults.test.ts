/** The pure results builders, without PostgreSQL: denominators, intervals over fields, phenotype shares, groups. */
import { describe, expect, it } from 'vitest';
import { buildSampleResults, type SampleFacts } from '../buildSampleResults';
import { buildStudyComparison } from '../buildStudyComparison';
import { clusteredProportion } from '../../analysis/stats';

const panel = [{ channelIndex: 0, marker: 'CD9' }, { channelIndex: 1, marker: 'CD63' }];
const field = (fieldId: string, name: string, vesicles: number) => ({
  fieldId, name, status: 'approved', vesicles, afmPixelNm: 3.9, flPixelNm: 65, freNm: 10, treNm: null, registrationVersion: 1, nbFiducials: 5,
});
const facts: SampleFacts = {
  sample: { id: 's', code: 'S-01', groupLabel: 'patient', studyId: 't', studyName: 'T', controlKind: 'none' },
  source: 'released',
  release: { id: 'r', version: 2, releasedAt: '2026-12-01T00:00:00.000Z' },
  panel,
  quartiles: { diameterNm: [60, 80, 100], heightNm: [5, 8, 12] },
  // F2 lies partly outside the CD63 frame: 40 of its 120 vesicles are not measured there
  markerCounts: [
    { fieldId: 'f1', channelIndex: 0, measured: 100, positive: 30 }, { fieldId: 'f1', channelIndex: 1, measured: 100, positive: 50 },
    { fieldId: 'f2', channelIndex: 0, measured: 120, positive: 60 }, { fieldId: 'f2', channelIndex: 1, measured: 80, positive: 20 },
  ],
  // phenotypes count only the vesicles measured in every channel: 100 in F1, 80 in F2
  phenotypes: [
    { fieldId: 'f1', bits: 0, n: 40 }, { fieldId: 'f1', bits: 1, n: 10 }, { fieldId: 'f1', bits: 2, n: 30 }, { fieldId: 'f1', bits: 3, n: 20 },
    { fieldId: 'f2', bits: 0, n: 30 }, { fieldId: 'f2', bits: 1, n: 30 }, { fieldId: 'f2', bits: 2, n: 5 }, { fieldId: 'f2', bits: 3, n: 15 },
  ],
  histograms: [
    { measure: 'diameter_nm', bits: 0, bucket: 0, n: 2 }, { measure: 'diameter_nm', bits: 0, bucket: 9, n: 148 },
    { measure: 'diameter_nm', bits: 1, bucket: 51, n: 70 }, { measure: 'height_nm', bits: 0, bucket: 3, n: 220 },
  ],
  fields: [field('f1', 'F1', 100), field('f2', 'F2', 120)],
};

describe('buildSampleResults', () => {
  const r = buildSampleResults(facts);
  it("a marker's denominator is the vesicles measured in its channel; the interval is over the fields", () => {
    expect(r.vesicles).toBe(220);
    expect(r.markers.map((m) => [m.marker, m.count, m.total])).toEqual([['CD9', 90, 220], ['CD63', 70, 180]]);
    const c = clusteredProportion([{ positive: 50, total: 100 }, { positive: 20, total: 80 }]);
    expect([r.markers[1].lower, r.markers[1].upper, r.markers[1].designEffect, r.markers[1].fields]).toEqual([c.lower, c.upper, c.designEffect, 2]);
    expect(r.markers[1].betweenFieldSd).toBeCloseTo(Math.SQRT2 * 0.125, 12); // SD of 0.5 and 0.25
    expect(r.fields.map((f) => [f.measured, f.positives])).toEqual([[[100, 100], [30, 50]], [[120, 80], [60, 20]]]);
  });
  it('phenotype shares are of the vesicles measured in every channel, commonest first', () => {
    expect(r.phenotyped).toBe(180);
    expect(r.phenotypes.map((p) => [p.label, p.count, p.total])).toEqual([
      ['CD9- CD63-', 70, 180], ['CD9+ CD63-', 40, 180], ['CD9- CD63+', 35, 180], ['CD9+ CD63+', 35, 180],
    ]);
  });
  it('histograms: below, bins and above; quartiles as read', () => {
    expect([r.diameter.histogram.below, r.diameter.histogram.counts[8], r.diameter.histogram.above]).toEqual([2, 148, 70]);
    expect(r.diameter.byPhenotype['1'].above).toBe(70);
    expect([r.diameter.q1Nm, r.diameter.medianNm, r.height.q3Nm]).toEqual([60, 80, 12]);
  });
});

describe('buildStudyComparison', () => {
  const sampleRow = (code: string, groupLabel: string) => ({ sampleId: code, code, groupLabel, releaseVersion: 1, fields: 1, vesicles: 100, medianDiameterNm: 80, medianHeightNm: 8 });
  const rows = {
    samples: [sampleRow('A1', 'a'), sampleRow('A2', 'a'), sampleRow('B1', 'b'), sampleRow('N1', '')],
    markerCounts: ['A1', 'A2', 'B1', 'N1'].map((s, i) => ({ sampleId: s, fieldId: `f${i}`, channelIndex: 0, measured: 100, positive: 10 * (i + 1) })),
    phenotypes: [],
  };
  it('without two groups: the per-sample table and samples per group only', () => {
    const c = buildStudyComparison({ study: { id: 't', name: 'T' }, source: 'released', panel: panel.slice(0, 1), rows, groupA: null, groupB: null });
    expect(c.groups).toEqual(['', 'a', 'b']);
    expect(c.samplesPerGroup).toEqual({ '': 1, a: 2, b: 1 });
    expect([c.comparisons, c.sizeComparisons, c.pooled]).toEqual([[], [], []]);
  });
  it('one sample in a group: reported, flagged, not tested', () => {
    const c = buildStudyComparison({ study: { id: 't', name: 'T' }, source: 'released', panel: panel.slice(0, 1), rows, groupA: 'a', groupB: 'b' });
    expect(c.comparisons.map((m) => [m.label, m.nSamplesA, m.nSamplesB, m.method, m.fewSamples, m.pValue])).toEqual([['CD9', 2, 1, 'not_tested', true, null]]);
    expect(c.pooled[0].a).toEqual({ count: 30, total: 200, fraction: 0.15, lower: null, upper: null });
  });
});
