/**
 * Shapes of the results API (`/api/samples/[id]/results`, `/api/studies/[id]/comparison`), shared by
 * the routes, the pages and the ResultsDashboard island. Plain data only: no server imports.
 */
import type { OutcomeComparison, SizeGroupComparison } from '../analysis/stats';

export type { OutcomeComparison, SizeGroupComparison };

/** Where the vesicle rows come from: the latest release, or (lab members only) the current link runs. */
export type ResultSource = 'released' | 'current';

/** A count with its fraction of a total and the 95% Wilson score interval of that fraction. */
export interface ProportionEstimate {
  /** Positive (or matching) vesicles (count). */
  readonly count: number;
  /** Vesicles analysed (count). */
  readonly total: number;
  /** count / total, or null when total is 0. */
  readonly fraction: number | null;
  readonly lower: number | null;
  readonly upper: number | null;
}

/**
 * A sample's fraction over its fields: `lower`/`upper` are a 95% Wilson interval on Kish's effective count
 * (total / designEffect), so the spread between fields widens it (see analysis/stats/clusteredProportion).
 */
export interface ClusteredEstimate extends ProportionEstimate {
  /** Fields with vesicles measured (count). */
  readonly fields: number;
  /** Between-field intraclass correlation (null with fewer than two fields). */
  readonly icc: number | null;
  readonly designEffect: number;
  /** SD of the per-field fractions (null with fewer than two fields). */
  readonly betweenFieldSd: number | null;
}

/** A marker's positive fraction: `total` counts only vesicles measured in that channel (inside its frame). */
export interface MarkerFraction extends ClusteredEstimate {
  readonly channelIndex: number;
  readonly marker: string;
}

/** A phenotype's share of the vesicles measured in every channel. */
export interface PhenotypeCount extends ClusteredEstimate {
  /** marker_bits: bit i set = panel channel i positive. */
  readonly bits: number;
  /** e.g. "CD9+ CD63- CD81+" (phenotypeLabel). */
  readonly label: string;
}

/** Fixed-width histogram; `counts[j]` covers [lowNm + j·binWidthNm, lowNm + (j+1)·binWidthNm). */
export interface Histogram {
  readonly lowNm: number;
  readonly binWidthNm: number;
  readonly counts: number[];
  /** Values below lowNm (count). */
  readonly below: number;
  /** Values at or above the last bin's upper edge (count). */
  readonly above: number;
}

export interface DistributionSummary {
  /** Median (nm), null without vesicles. */
  readonly medianNm: number | null;
  readonly q1Nm: number | null;
  readonly q3Nm: number | null;
}

export interface FieldBreakdown {
  readonly fieldId: string;
  readonly name: string;
  readonly status: string;
  readonly vesicles: number;
  /** Per panel channel: vesicles measured there, and positive there (counts). */
  readonly measured: number[];
  readonly positives: number[];
  /** Latest registration's fiducial registration error (nm), null if not registered. */
  readonly freNm: number | null;
  readonly treNm: number | null;
  readonly nbFiducials: number | null;
  readonly registrationVersion: number | null;
  readonly afmPixelNm: number | null;
  readonly flPixelNm: number | null;
}

export interface ReleaseInfo {
  readonly id: string;
  readonly version: number;
  readonly releasedAt: string;
}

export interface SampleResults {
  readonly sample: { id: string; code: string; groupLabel: string; studyId: string; studyName: string; controlKind: string };
  readonly source: ResultSource;
  /** The release shown (null for a preview of current data). */
  readonly release: ReleaseInfo | null;
  readonly panel: { channelIndex: number; marker: string }[];
  readonly fieldsAnalysed: number;
  readonly vesicles: number;
  /** Vesicles measured in every channel: the denominator of the phenotype shares (count). */
  readonly phenotyped: number;
  readonly markers: MarkerFraction[];
  readonly phenotypes: PhenotypeCount[];
  readonly diameter: DistributionSummary & { histogram: Histogram; byPhenotype: Record<string, Histogram> };
  readonly height: DistributionSummary & { histogram: Histogram; byPhenotype: Record<string, Histogram> };
  readonly fields: FieldBreakdown[];
  /** Where the sample stands in its group (between-sample quality control); absent where not computed. */
  readonly groupSpread?: GroupSpread | null;
}

/** The samples of one group, per marker: typical fraction, range and between-sample SD (logit scale). */
export interface GroupSpread {
  readonly group: string;
  /** Samples of the group with results in the same source (count). */
  readonly samples: number;
  readonly markers: {
    readonly channelIndex: number;
    readonly marker: string;
    /** Samples with vesicles measured in this channel (count). */
    readonly samples: number;
    readonly sampleFraction: number | null;
    readonly typicalFraction: number | null;
    readonly lowestFraction: number | null;
    readonly highestFraction: number | null;
    readonly sdLogit: number | null;
  }[];
}

export interface SampleMarkerRow {
  readonly sampleId: string;
  readonly code: string;
  readonly groupLabel: string;
  readonly releaseVersion: number | null;
  readonly markers: MarkerFraction[];
  readonly vesicles: number;
  readonly fields: number;
  /** The sample's median equivalent diameter and height (nm; of values rounded to 0.5 and 0.1 nm). */
  readonly medianDiameterNm: number | null;
  readonly medianHeightNm: number | null;
}

/** Vesicles of all samples of a group pooled: for looking at only, never tested (vesicles are not independent). */
export interface PooledFraction {
  readonly key: string;
  readonly label: string;
  readonly kind: 'marker' | 'phenotype';
  readonly a: ProportionEstimate;
  readonly b: ProportionEstimate;
}

export interface StudyComparison {
  readonly study: { id: string; name: string };
  readonly source: ResultSource;
  readonly panel: { channelIndex: number; marker: string }[];
  readonly groups: string[];
  /** Samples with data per group label (count). */
  readonly samplesPerGroup: Record<string, number>;
  readonly samples: SampleMarkerRow[];
  readonly groupA: string | null;
  readonly groupB: string | null;
  /** Markers, then phenotype combinations: per-sample fractions compared (empty without two groups). */
  readonly comparisons: OutcomeComparison[];
  /** Per-sample median sizes compared. */
  readonly sizeComparisons: SizeGroupComparison[];
  /** Descriptive pooled fractions per group, without p-values. */
  readonly pooled: PooledFraction[];
}
