/** Builders of the CSV exports (pure: result objects in, CSV text out). */
import { csvComments, csvRow } from './csv';
import { RESEARCH_USE_COMMENT } from '../csv';
import type { SampleResults, StudyComparison } from './types';
import { COMPARISON_METHOD } from './methodText';

/**
 * Summary CSV of one sample: one row per marker (denominator: vesicles measured in that channel) and per
 * phenotype combination (denominator: vesicles measured in every channel), each with the count, the
 * fraction and its 95% interval over the fields (Wilson on Kish's effective count), the design effect,
 * the between-field ICC and SD; then per marker the group's typical sample with the range over the group in the
 * interval columns and the between-sample SD of logits in `sd_between` (group_typical_sample rows; on marker and
 * phenotype rows `sd_between` is the SD of the field fractions),
 * and one row per field with its counts (quality control).
 *
 * @param r - the sample's results
 * @returns the CSV text, starting with the research-use-only line
 */
export function sampleSummaryCsv(r: SampleResults): string {
  const release = r.release ? `release v${r.release.version} of ${r.release.releasedAt}` : 'unreleased preview of the current analysis';
  let out = csvComments([
    RESEARCH_USE_COMMENT,
    `Sample ${r.sample.code} (${r.sample.groupLabel || 'no group'}), ${release}; ${r.fieldsAnalysed} field(s), ${r.vesicles} vesicles (${r.phenotyped} measured in every channel); median diameter ${r.diameter.medianNm?.toFixed(1) ?? '-'} nm, median height ${r.height.medianNm?.toFixed(1) ?? '-'} nm`,
    COMPARISON_METHOD.perSample,
  ]);
  out += csvRow(['sample_code', 'group_label', 'release_version', 'row_kind', 'item', 'vesicles_count', 'count', 'fraction', 'ci95_lower', 'ci95_upper', 'design_effect', 'icc_between_fields', 'sd_between', 'fields_count']);
  const version = r.release?.version ?? null;
  for (const m of r.markers) {
    out += csvRow([r.sample.code, r.sample.groupLabel, version, 'marker_positive', m.marker, m.total, m.count, m.fraction, m.lower, m.upper, m.designEffect, m.icc, m.betweenFieldSd, m.fields]);
  }
  for (const p of r.phenotypes) {
    out += csvRow([r.sample.code, r.sample.groupLabel, version, 'phenotype', p.label, p.total, p.count, p.fraction, p.lower, p.upper, p.designEffect, p.icc, p.betweenFieldSd, p.fields]);
  }
  for (const m of r.groupSpread?.markers ?? []) {
    out += csvRow([r.sample.code, r.sample.groupLabel, version, 'group_typical_sample', m.marker, '', '', m.typicalFraction, m.lowestFraction, m.highestFraction, '', '', m.sdLogit, '']);
  }
  for (const f of r.fields) {
    r.panel.forEach((c, i) => {
      out += csvRow([r.sample.code, r.sample.groupLabel, version, 'field_marker_positive', `${f.name}: ${c.marker}`, f.measured[i], f.positives[i], f.measured[i] ? f.positives[i] / f.measured[i] : null, null, null, null, null, null, 1]);
    });
  }
  return out;
}

/**
 * Comparison CSV of a study, from the same object the page shows: per-sample fractions with their
 * intervals over fields; then, for two groups, one row per marker and phenotype compared with the sample
 * as the unit (typical fraction per group, difference with its 95% interval, p, Benjamini–Hochberg),
 * the per-sample median sizes compared, and the pooled per-group fractions, descriptive only.
 *
 * @param c - the study comparison
 * @returns the CSV text, starting with the research-use-only line
 */
export function comparisonCsv(c: StudyComparison): string {
  const perGroup = Object.entries(c.samplesPerGroup).map(([g, n]) => `${g || '(no group)'}: ${n}`).join('; ');
  let out = csvComments([
    RESEARCH_USE_COMMENT,
    `Study ${c.study.name}; ${c.source === 'released' ? 'latest release of each sample' : 'unreleased preview'}; samples per group: ${perGroup}`,
    COMPARISON_METHOD.unit, COMPARISON_METHOD.fractions, COMPARISON_METHOD.sizes, COMPARISON_METHOD.perSample, COMPARISON_METHOD.pooled,
  ]);
  out += csvRow([
    'row_kind', 'group', 'sample_code', 'item', 'samples_a', 'samples_b', 'measured_count', 'positive_count', 'fraction',
    'value_a', 'value_b', 'difference', 'ci95_lower', 'ci95_upper', 'p_value', 'p_adjusted_bh', 'method', 'design_effect', 'sd_between', 'note',
  ]);
  for (const s of c.samples) {
    for (const m of s.markers) {
      out += csvRow(['sample', s.groupLabel, s.code, m.marker, '', '', m.total, m.count, m.fraction, '', '', '', m.lower, m.upper, '', '', 'wilson_design_effect', m.designEffect, m.betweenFieldSd, `${m.fields} field(s)`]);
    }
  }
  const pair = `${c.groupA} - ${c.groupB}`;
  for (const m of c.comparisons) {
    out += csvRow([
      `comparison_${m.kind}`, pair, '', m.label, m.nSamplesA, m.nSamplesB, '', '', '', m.fractionA, m.fractionB, m.difference,
      m.ci95?.[0] ?? null, m.ci95?.[1] ?? null, m.pValue, m.pAdjusted, m.method, '', `${m.sdLogitA ?? ''}/${m.sdLogitB ?? ''}`,
      m.fewSamples ? 'fewer than 3 samples in a group' : '',
    ]);
  }
  for (const s of c.sizeComparisons) {
    out += csvRow([
      'comparison_size_median_nm', pair, '', s.measure, s.nSamplesA, s.nSamplesB, '', '', '', s.meanMedianANm, s.meanMedianBNm, s.differenceNm,
      s.ci95Nm?.[0] ?? null, s.ci95Nm?.[1] ?? null, s.pValue, s.pAdjusted, s.method, '', '', s.fewSamples ? 'fewer than 3 samples in a group' : '',
    ]);
  }
  for (const p of c.pooled) {
    out += csvRow(['pooled_descriptive', c.groupA, '', p.label, '', '', p.a.total, p.a.count, p.a.fraction, '', '', '', '', '', '', '', '', '', '', 'no test: vesicles are not independent']);
    out += csvRow(['pooled_descriptive', c.groupB, '', p.label, '', '', p.b.total, p.b.count, p.b.fraction, '', '', '', '', '', '', '', '', '', '', 'no test: vesicles are not independent']);
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
