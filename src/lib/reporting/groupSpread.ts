/**
 * Where a sample stands among the samples of its group (pure): per marker, the group's typical fraction
 * (back-transformed mean empirical logit), the range, and the between-sample SD on the logit scale. Shown
 * beside a sample's own results as quality control, next to the between-field spread.
 */
import { empiricalLogit } from '../analysis/stats';
import type { GroupSpread, StudyComparison } from './types';

/**
 * @param c - the study's per-sample table (any source; only the samples in it are used)
 * @param sampleId - the sample shown
 * @param group - its group label
 * @returns the spread of its group, per panel marker
 */
export function groupSpread(c: StudyComparison, sampleId: string, group: string): GroupSpread {
  const inGroup = c.samples.filter((s) => s.groupLabel === group);
  const self = inGroup.find((s) => s.sampleId === sampleId);
  return {
    group,
    samples: inGroup.length,
    markers: c.panel.map((p) => {
      const rows = inGroup.map((s) => s.markers.find((m) => m.channelIndex === p.channelIndex)).filter((m) => m !== undefined && m.total > 0);
      const logits = rows.map((m) => empiricalLogit(m!.count, m!.total));
      const fractions = rows.map((m) => m!.count / m!.total);
      const mean = logits.length ? logits.reduce((t, x) => t + x, 0) / logits.length : null;
      const sd = logits.length > 1 ? Math.sqrt(logits.reduce((t, x) => t + (x - mean!) ** 2, 0) / (logits.length - 1)) : null;
      const own = self?.markers.find((m) => m.channelIndex === p.channelIndex);
      return {
        channelIndex: p.channelIndex,
        marker: p.marker,
        samples: rows.length,
        sampleFraction: own?.fraction ?? null,
        typicalFraction: mean === null ? null : 1 / (1 + Math.exp(-mean)),
        lowestFraction: fractions.length ? Math.min(...fractions) : null,
        highestFraction: fractions.length ? Math.max(...fractions) : null,
        sdLogit: sd,
      };
    }),
  };
}
