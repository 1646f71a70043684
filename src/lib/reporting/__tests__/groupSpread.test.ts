import { describe, expect, it } from 'vitest';
import { buildStudyComparison } from '../buildStudyComparison';
import { groupSpread } from '../groupSpread';

const elogit = (x: number, n: number) => Math.log((x + 0.5) / (n - x + 0.5)); // Cox 1970 §3.2

describe('groupSpread', () => {
  const row = (code: string, groupLabel: string) => ({ sampleId: code, code, groupLabel, releaseVersion: 1, fields: 1, vesicles: 100, medianDiameterNm: null, medianHeightNm: null });
  const table = buildStudyComparison({
    study: { id: 't', name: 'T' }, source: 'released', groupA: null, groupB: null,
    panel: [{ channelIndex: 0, marker: 'CD9' }],
    rows: {
      samples: [row('A1', 'a'), row('A2', 'a'), row('A3', 'a'), row('B1', 'b')],
      markerCounts: [['A1', 20], ['A2', 50], ['A3', 35], ['B1', 90]].map(([s, k]) => ({ sampleId: s as string, fieldId: `${s}-f`, channelIndex: 0, measured: 100, positive: k as number })),
      phenotypes: [],
    },
  });
  it("a sample's group: its samples only, typical fraction from the mean logit, range, SD of logits", () => {
    const g = groupSpread(table, 'A2', 'a');
    const logits = [elogit(20, 100), elogit(50, 100), elogit(35, 100)];
    const mean = logits.reduce((t, x) => t + x, 0) / 3;
    const sd = Math.sqrt(logits.reduce((t, x) => t + (x - mean) ** 2, 0) / 2);
    expect([g.group, g.samples]).toEqual(['a', 3]);
    const m = g.markers[0];
    expect([m.samples, m.sampleFraction, m.lowestFraction, m.highestFraction]).toEqual([3, 0.5, 0.2, 0.5]);
    expect(m.typicalFraction).toBeCloseTo(1 / (1 + Math.exp(-mean)), 12);
    expect(m.sdLogit).toBeCloseTo(sd, 12);
  });
  it('a group of one has no spread', () => {
    expect(groupSpread(table, 'B1', 'b').markers[0].sdLogit).toBeNull();
  });
});
