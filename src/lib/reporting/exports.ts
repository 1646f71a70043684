/** Builders of the CSV exports (pure: result objects in, CSV text out). */
import { csvComments, csvRow } from './csv';
import { RESEARCH_USE_COMMENT } from '../csv';
import type { SampleResults, StudyComparison } from './types';

/**
 * Summary CSV of one sample: one row per marker and per phenotype combination, each with the count,
 * the fraction of all vesicles and its 95% Wilson interval.
 *
 * @param r - the sample's results
 * @returns the CSV text, starting with the research-use-only line
 */
export function sampleSummaryCsv(r: SampleResults): string {
  const release = r.release ? `release v${r.release.version} of ${r.release.releasedAt}` : 'unreleased preview of the current analysis';
  let out = csvComments([
    RESEARCH_USE_COMMENT,
    `Sample ${r.sample.code} (${r.sample.groupLabel || 'no group'}), ${release}; ${r.fieldsAnalysed} field(s), ${r.vesicles} vesicles; median diameter ${r.diameter.medianNm?.toFixed(1) ?? '-'} nm, median height ${r.height.medianNm?.toFixed(1) ?? '-'} nm`,
  ]);
  out += csvRow(['sample_code', 'group_label', 'release_version', 'row_kind', 'item', 'vesicles_count', 'count', 'fraction', 'wilson95_lower', 'wilson95_upper']);
  const version = r.release?.version ?? null;
  for (const m of r.markers) {
    out += csvRow([r.sample.code, r.sample.groupLabel, version, 'marker_positive', m.marker, m.total, m.count, m.fraction, m.lower, m.upper]);
  }
  for (const p of r.phenotypes) {
    out += csvRow([r.sample.code, r.sample.groupLabel, version, 'phenotype', p.label, p.total, p.count, p.fraction, p.lower, p.upper]);
  }
  return out;
}

/**
 * Comparison CSV of a study: per-sample marker fractions, then (when two groups were chosen) one row
 * per marker with the pooled fractions, the difference A − B with Newcombe's interval and the p-values.
 *
 * @param c - the study comparison
 * @returns the CSV text, starting with the research-use-only line
 */
export function comparisonCsv(c: StudyComparison): string {
  let out = csvComments([
    RESEARCH_USE_COMMENT,
    `Study ${c.study.name}; ${c.source === 'released' ? 'latest release of each sample' : 'unreleased preview'}; vesicles pooled per group, tests treat vesicles as independent`,
  ]);
  out += csvRow(['row_kind', 'group_label', 'sample_code', 'marker', 'vesicles_count', 'positive_count', 'fraction', 'ci95_lower', 'ci95_upper', 'test', 'p_value', 'p_adjusted_bh']);
  for (const s of c.samples) {
    for (const m of s.markers) out += csvRow(['sample', s.groupLabel, s.code, m.marker, m.total, m.count, m.fraction, m.lower, m.upper, '', '', '']);
  }
  for (const m of c.markerComparisons) {
    out += csvRow(['group', c.groupA, '', m.marker, m.a.total, m.a.count, m.a.fraction, m.a.lower, m.a.upper, '', '', '']);
    out += csvRow(['group', c.groupB, '', m.marker, m.b.total, m.b.count, m.b.fraction, m.b.lower, m.b.upper, '', '', '']);
    out += csvRow(['difference', `${c.groupA} - ${c.groupB}`, '', m.marker, m.a.total + m.b.total, '', m.difference, m.differenceLower, m.differenceUpper, m.test ?? '', m.pValue, m.pAdjusted]);
  }
  for (const s of c.sizeComparisons) {
    out += csvRow(['mann_whitney', `${c.groupA} - ${c.groupB}`, '', s.measure, s.usedA + s.usedB, '', '', '', '', `U=${s.uStatistic ?? ''}`, s.pValue, '']);
  }
  return out;
}

/**
 * Column names of a sample's per-vesicle export (released or preview, for everyone in the study), unit-suffixed.
 * The lab's export of a field or sample (/api/vesicles/export.csv) uses the analysis core's CSV writer instead,
 * with the geometry columns the command line writes.
 */
export function sampleVesicleCsvHeader(markers: readonly string[]): string {
  const safe = markers.map((m) => m.replace(/[^A-Za-z0-9]+/g, '_'));
  return csvComments([RESEARCH_USE_COMMENT]) + csvRow([
    'sample_code', 'field_id', 'link_run_id', 'vesicle_index', 'height_nm', 'diameter_nm', 'area_nm2', 'volume_nm3',
    ...safe.map((m) => `${m}_intensity`), ...safe,
  ]);
}

/**
 * One per-vesicle CSV row.
 *
 * @param sampleCode - the sample's code
 * @param v - the vesicle (intensities in panel order, counts)
 * @param channelIndexes - panel channel indexes in column order
 * @returns the CSV line
 */
export function sampleVesicleCsvRow(
  sampleCode: string,
  v: { fieldId: string; linkRunId: string; index: number; heightNm: number; diameterNm: number; areaNm2: number; volumeNm3: number; markerBits: number; intensities: (number | null)[] },
  channelIndexes: readonly number[],
): string {
  return csvRow([
    sampleCode, v.fieldId, v.linkRunId, v.index, v.heightNm, v.diameterNm, v.areaNm2, v.volumeNm3,
    ...channelIndexes.map((i) => v.intensities[i] ?? null),
    ...channelIndexes.map((i) => ((v.markerBits & (1 << i)) !== 0 ? 1 : 0)),
  ]);
}
