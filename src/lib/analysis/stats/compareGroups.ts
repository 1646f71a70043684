import { benjaminiHochberg } from './benjaminiHochberg';
import { compareSampleFractions, type CompareSampleFractionsResult } from './compareSampleFractions';
import { compareSampleMedians, type CompareSampleMediansResult } from './compareSampleMedians';
import type { FieldCount } from './types';

/** A binary outcome compared between groups: a marker, or a phenotype combination. */
export interface GroupOutcome {
  readonly key: string;
  readonly label: string;
  readonly kind: 'marker' | 'phenotype';
}

/** One sample (donor) of the study. */
export interface GroupSample {
  readonly sample: string;
  readonly group: string;
  /** Per outcome, in the order of `outcomes`: positive and measured vesicles over all the sample's fields. */
  readonly counts: readonly FieldCount[];
  /** The sample's median equivalent diameter and height (nm), null or absent when unknown. */
  readonly medianDiameterNm?: number | null;
  readonly medianHeightNm?: number | null;
}

/** Input of {@link compareGroups}. */
export interface CompareGroupsInput {
  readonly groupA: string;
  readonly groupB: string;
  readonly outcomes: readonly GroupOutcome[];
  readonly samples: readonly GroupSample[];
}

/** One outcome's comparison. */
export interface OutcomeComparison extends CompareSampleFractionsResult, GroupOutcome {
  readonly groupA: string;
  readonly groupB: string;
  /** Benjamini–Hochberg adjusted over every outcome tested (markers and phenotypes together). */
  readonly pAdjusted: number | null;
  /** True when a group has fewer than 3 samples with data: too few for a dependable comparison. */
  readonly fewSamples: boolean;
}

/** One size measure's comparison (per-sample medians). */
export interface SizeGroupComparison extends CompareSampleMediansResult {
  readonly measure: 'diameter_nm' | 'height_nm';
  /** Benjamini–Hochberg adjusted over the two size measures. */
  readonly pAdjusted: number | null;
  readonly fewSamples: boolean;
}

/** Result of {@link compareGroups}. */
export interface CompareGroupsResult {
  readonly groupA: string;
  readonly groupB: string;
  readonly outcomes: OutcomeComparison[];
  readonly sizes: SizeGroupComparison[];
}

/** Fewer samples than this in a group draws a warning (common practice: 3 biological replicates at least). */
export const MIN_SAMPLES_PER_GROUP = 3;

function adjust<T extends { pValue: number | null }>(rows: T[]): (T & { pAdjusted: number | null })[] {
  const tested = rows.filter((r) => r.pValue !== null);
  const q = benjaminiHochberg(tested.map((r) => r.pValue!));
  return rows.map((r) => ({ ...r, pAdjusted: r.pValue === null ? null : q[tested.indexOf(r)] }));
}

/**
 * The group comparison of a study, with the sample (donor) as the unit: every outcome's per-sample fractions
 * compared by Welch's test on empirical logits (compareSampleFractions), Benjamini–Hochberg across all
 * outcomes, and per-sample median sizes compared by Welch's test. The web page, its CSV and `npm run compare`
 * all call this one function, so they cannot disagree.
 *
 * @param input - groups, outcomes and per-sample counts
 * @returns one comparison per outcome (input order) and per size measure
 * @throws RangeError when a sample's counts do not match the outcomes or are not counts
 */
export function compareGroups(input: CompareGroupsInput): CompareGroupsResult {
  const { groupA, groupB, outcomes, samples } = input;
  for (const s of samples) {
    if (s.counts.length !== outcomes.length) throw new RangeError(`sample ${s.sample} has ${s.counts.length} counts for ${outcomes.length} outcomes`);
  }
  const inA = samples.filter((s) => s.group === groupA);
  const inB = samples.filter((s) => s.group === groupB);
  const few = (r: { nSamplesA: number; nSamplesB: number }) => r.nSamplesA < MIN_SAMPLES_PER_GROUP || r.nSamplesB < MIN_SAMPLES_PER_GROUP;
  const raw = outcomes.map((o, i) => {
    const r = compareSampleFractions(inA.map((s) => s.counts[i]), inB.map((s) => s.counts[i]));
    return { ...o, groupA, groupB, ...r, fewSamples: few(r) };
  });
  const sizes = (['diameter_nm', 'height_nm'] as const).map((measure) => {
    const pick = (s: GroupSample) => (measure === 'diameter_nm' ? s.medianDiameterNm : s.medianHeightNm) ?? null;
    const r = compareSampleMedians(inA.map(pick), inB.map(pick));
    return { measure, ...r, fewSamples: few(r) };
  });
  return { groupA, groupB, outcomes: adjust(raw), sizes: adjust(sizes) };
}
