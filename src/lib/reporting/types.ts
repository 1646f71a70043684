/**
 * Shapes of the results API (`/api/samples/[id]/results`, `/api/studies/[id]/comparison`), shared by
 * the routes, the pages and the ResultsDashboard island. Plain data only: no server imports.
 */

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

export interface MarkerFraction extends ProportionEstimate {
  readonly channelIndex: number;
  readonly marker: string;
}

export interface PhenotypeCount extends ProportionEstimate {
  /** marker_bits: bit i set = panel channel i positive. */
  readonly bits: number;
  /** e.g. "CD9+ CD63− CD81+". */
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
  readonly markers: MarkerFraction[];
  readonly phenotypes: PhenotypeCount[];
  readonly diameter: DistributionSummary & { histogram: Histogram; byPhenotype: Record<string, Histogram> };
  readonly height: DistributionSummary & { histogram: Histogram; byPhenotype: Record<string, Histogram> };
  readonly fields: FieldBreakdown[];
}

export interface SampleMarkerRow {
  readonly sampleId: string;
  readonly code: string;
  readonly groupLabel: string;
  readonly releaseVersion: number | null;
  readonly markers: MarkerFraction[];
  readonly vesicles: number;
}

export interface MarkerComparison {
  readonly marker: string;
  readonly channelIndex: number;
  readonly a: ProportionEstimate;
  readonly b: ProportionEstimate;
  /** Null when a group has no vesicles. */
  readonly test: 'fisher_exact' | 'chi_square' | null;
  readonly pValue: number | null;
  /** Benjamini–Hochberg adjusted across the markers compared. */
  readonly pAdjusted: number | null;
  /** fraction A − fraction B with Newcombe's hybrid score interval. */
  readonly difference: number | null;
  readonly differenceLower: number | null;
  readonly differenceUpper: number | null;
}

export interface SizeComparison {
  readonly measure: 'diameter_nm' | 'height_nm';
  /** Vesicles in each group (count) and how many entered the test (bounded, deterministic thinning). */
  readonly nA: number;
  readonly nB: number;
  readonly usedA: number;
  readonly usedB: number;
  readonly medianA: number | null;
  readonly medianB: number | null;
  readonly uStatistic: number | null;
  readonly pValue: number | null;
  readonly method: 'exact' | 'normal' | null;
}

export interface StudyComparison {
  readonly study: { id: string; name: string };
  readonly source: ResultSource;
  readonly panel: { channelIndex: number; marker: string }[];
  readonly groups: string[];
  readonly samples: SampleMarkerRow[];
  readonly groupA: string | null;
  readonly groupB: string | null;
  readonly markerComparisons: MarkerComparison[];
  readonly sizeComparisons: SizeComparison[];
}
