/**
 * A study's group comparison from the rows of its summaries (pure: no database). Every sample's fractions
 * come with an interval over its fields; the groups are compared by compareGroups, the module the CSV and
 * `npm run compare` share, with the sample as the unit. Pooled per-group fractions are descriptive only.
 */
import { compareGroups, type GroupOutcome, type GroupSample } from '../analysis/stats';
import { clusteredEstimate } from './buildSampleResults';
import { phenotypeLabel } from './phenotypeLabel';
import type { PooledFraction, ResultSource, SampleMarkerRow, StudyComparison } from './types';

/** What getComparisonRows reads (src/lib/db/queries/comparisonInput.ts). */
export interface ComparisonRows {
  readonly samples: readonly {
    sampleId: string; code: string; groupLabel: string; releaseVersion: number | null; fields: number; vesicles: number;
    medianDiameterNm: number | null; medianHeightNm: number | null;
  }[];
  /** Per sample, field and channel: vesicles measured there and positive there (counts). */
  readonly markerCounts: readonly { sampleId: string; fieldId: string; channelIndex: number; measured: number; positive: number }[];
  /** Per sample, field and marker combination: vesicles measured in every channel (counts). */
  readonly phenotypes: readonly { sampleId: string; fieldId: string; bits: number; n: number }[];
}

export interface BuildStudyComparisonInput {
  readonly study: { id: string; name: string };
  readonly source: ResultSource;
  readonly panel: { channelIndex: number; marker: string }[];
  readonly rows: ComparisonRows;
  /** The two groups to compare, or null for the per-sample table only. */
  readonly groupA: string | null;
  readonly groupB: string | null;
}

/**
 * @param input - the study, its panel, the rows and the groups asked for
 * @returns per-sample fractions by group and, for two groups, the comparisons of markers, phenotypes and sizes
 */
export function buildStudyComparison(input: BuildStudyComparisonInput): StudyComparison {
  const { study, source, panel, rows, groupA, groupB } = input;
  const fieldsOf = new Map<string, Set<string>>();
  for (const r of [...rows.markerCounts, ...rows.phenotypes]) (fieldsOf.get(r.sampleId) ?? fieldsOf.set(r.sampleId, new Set()).get(r.sampleId)!).add(r.fieldId);
  const markerFields = (sampleId: string, channelIndex: number) => [...(fieldsOf.get(sampleId) ?? [])].map((fieldId) => {
    const m = rows.markerCounts.find((x) => x.sampleId === sampleId && x.fieldId === fieldId && x.channelIndex === channelIndex);
    return { positive: m?.positive ?? 0, total: m?.measured ?? 0 };
  });
  const samples: SampleMarkerRow[] = rows.samples.map((s) => ({
    sampleId: s.sampleId, code: s.code, groupLabel: s.groupLabel, releaseVersion: s.releaseVersion ?? null,
    vesicles: s.vesicles, fields: s.fields, medianDiameterNm: s.medianDiameterNm, medianHeightNm: s.medianHeightNm,
    markers: panel.map((c) => ({ channelIndex: c.channelIndex, marker: c.marker, ...clusteredEstimate(markerFields(s.sampleId, c.channelIndex)) })),
  }));
  const groups = [...new Set(samples.map((s) => s.groupLabel))].sort();
  const samplesPerGroup = Object.fromEntries(groups.map((g) => [g, samples.filter((s) => s.groupLabel === g).length]));
  const base = { study, source, panel, groups, samplesPerGroup, samples, groupA, groupB };
  if (groupA === null || groupB === null) return { ...base, comparisons: [], sizeComparisons: [], pooled: [] };

  // phenotype combinations seen in the study, commonest first
  const byBits = new Map<number, number>();
  for (const p of rows.phenotypes) byBits.set(p.bits, (byBits.get(p.bits) ?? 0) + p.n);
  const combos = [...byBits.entries()].sort((x, y) => y[1] - x[1] || x[0] - y[0]).map(([bits]) => bits);
  const markerNames = panel.map((c) => c.marker);
  const outcomes: GroupOutcome[] = [
    ...panel.map((c) => ({ key: `marker:${c.channelIndex}`, label: c.marker, kind: 'marker' as const })),
    ...combos.map((bits) => ({ key: `phenotype:${bits}`, label: phenotypeLabel(bits, markerNames), kind: 'phenotype' as const })),
  ];
  const phenotyped = (sampleId: string) => rows.phenotypes.filter((p) => p.sampleId === sampleId).reduce((t, p) => t + p.n, 0);
  const groupSamples: GroupSample[] = samples.map((s) => {
    const total = phenotyped(s.sampleId);
    return {
      sample: s.code, group: s.groupLabel, medianDiameterNm: s.medianDiameterNm, medianHeightNm: s.medianHeightNm,
      counts: [
        ...s.markers.map((m) => ({ positive: m.count, total: m.total })),
        ...combos.map((bits) => ({ positive: rows.phenotypes.filter((p) => p.sampleId === s.sampleId && p.bits === bits).reduce((t, p) => t + p.n, 0), total })),
      ],
    };
  });
  const result = compareGroups({ groupA, groupB, outcomes, samples: groupSamples });
  const pool = (group: string, i: number) => {
    const inGroup = groupSamples.filter((s) => s.group === group);
    const count = inGroup.reduce((t, s) => t + s.counts[i].positive, 0);
    const total = inGroup.reduce((t, s) => t + s.counts[i].total, 0);
    // descriptive only: no interval, since vesicles of one sample are not independent
    return { count, total, fraction: total ? count / total : null, lower: null, upper: null };
  };
  const pooled: PooledFraction[] = outcomes.map((o, i) => ({ key: o.key, label: o.label, kind: o.kind, a: pool(groupA, i), b: pool(groupB, i) }));
  return { ...base, comparisons: result.outcomes, sizeComparisons: result.sizes, pooled };
}
