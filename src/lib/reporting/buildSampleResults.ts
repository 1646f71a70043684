/**
 * A sample's results from the rows its summaries hold (pure: no database). Marker fractions count only the
 * vesicles measured in that channel; phenotype shares only those measured in every channel. Each fraction's
 * interval accounts for the spread between the sample's fields (clusteredProportion).
 */
import { clusteredProportion, type FieldCount } from '../analysis/stats';
import { DIAMETER_BINS, HEIGHT_BINS } from '../db/queries/linkRunSummaries';
import { phenotypeLabel } from './phenotypeLabel';
import type { ClusteredEstimate, FieldBreakdown, Histogram, MarkerFraction, PhenotypeCount, ReleaseInfo, ResultSource, SampleResults } from './types';

export interface SampleFacts {
  readonly sample: { id: string; code: string; groupLabel: string; studyId: string; studyName: string; controlKind: string };
  readonly source: ResultSource;
  readonly release: ReleaseInfo | null;
  readonly panel: { channelIndex: number; marker: string }[];
  /** Quartiles (25, 50, 75 %) of every vesicle's diameter and height (nm), null without vesicles. */
  readonly quartiles: { diameterNm: number[] | null; heightNm: number[] | null };
  /** Per field and channel: vesicles measured there and positive there (counts). */
  readonly markerCounts: readonly { fieldId: string; channelIndex: number; measured: number; positive: number }[];
  /** Per field and marker combination: vesicles measured in every channel with that combination (counts). */
  readonly phenotypes: readonly { fieldId: string; bits: number; n: number }[];
  /** Dashboard histogram counts (bucket: width_bucket over DIAMETER_BINS / HEIGHT_BINS, 0 below, bins + 1 above). */
  readonly histograms: readonly { measure: 'diameter_nm' | 'height_nm'; bits: number; bucket: number; n: number }[];
  /** One row per field in the selection, in display order. */
  readonly fields: readonly {
    fieldId: string; name: string; status: string; vesicles: number; afmPixelNm: number | null; flPixelNm: number | null;
    freNm: number | null; treNm: number | null; registrationVersion: number | null; nbFiducials: number | null;
  }[];
}

function emptyHistogram(spec: { lowNm: number; highNm: number; bins: number }): Histogram & { counts: number[] } {
  return { lowNm: spec.lowNm, binWidthNm: (spec.highNm - spec.lowNm) / spec.bins, counts: new Array(spec.bins).fill(0), below: 0, above: 0 };
}

function addToHistogram(h: { counts: number[]; below: number; above: number }, bucket: number, n: number) {
  if (bucket <= 0) h.below += n;
  else if (bucket > h.counts.length) h.above += n;
  else h.counts[bucket - 1] += n;
}

/** A clustered estimate in the shape of the results API. */
export function clusteredEstimate(fields: readonly FieldCount[]): ClusteredEstimate {
  const c = clusteredProportion(fields);
  return {
    count: c.positive, total: c.total, fraction: c.fraction, lower: c.lower, upper: c.upper,
    fields: c.fields, icc: c.icc, designEffect: c.designEffect, betweenFieldSd: c.betweenFieldSd,
  };
}

/**
 * @param f - the sample's facts
 * @returns what the results API, the page and the summary CSV show
 */
export function buildSampleResults(f: SampleFacts): SampleResults {
  const fieldIds = f.fields.map((x) => x.fieldId);
  const markerCell = (fieldId: string, channelIndex: number) =>
    f.markerCounts.find((m) => m.fieldId === fieldId && m.channelIndex === channelIndex) ?? { measured: 0, positive: 0 };
  const markers: MarkerFraction[] = f.panel.map((c) => ({
    channelIndex: c.channelIndex,
    marker: c.marker,
    ...clusteredEstimate(fieldIds.map((id) => {
      const m = markerCell(id, c.channelIndex);
      return { positive: m.positive, total: m.measured };
    })),
  }));
  const phenotypedBy = new Map<string, number>();
  for (const p of f.phenotypes) phenotypedBy.set(p.fieldId, (phenotypedBy.get(p.fieldId) ?? 0) + p.n);
  const phenotyped = [...phenotypedBy.values()].reduce((t, n) => t + n, 0);
  const combos = [...new Set(f.phenotypes.map((p) => p.bits))];
  const markerNames = f.panel.map((c) => c.marker);
  const phenotypes: PhenotypeCount[] = combos
    .map((bits) => ({
      bits,
      label: phenotypeLabel(bits, markerNames),
      ...clusteredEstimate(fieldIds.map((id) => ({
        positive: f.phenotypes.filter((p) => p.fieldId === id && p.bits === bits).reduce((t, p) => t + p.n, 0),
        total: phenotypedBy.get(id) ?? 0,
      }))),
    }))
    .sort((x, y) => y.count - x.count || x.bits - y.bits);

  const diameter = emptyHistogram(DIAMETER_BINS);
  const height = emptyHistogram(HEIGHT_BINS);
  const diameterBy: Record<string, ReturnType<typeof emptyHistogram>> = {};
  const heightBy: Record<string, ReturnType<typeof emptyHistogram>> = {};
  for (const r of f.histograms) {
    const [overall, by, spec] = r.measure === 'diameter_nm' ? [diameter, diameterBy, DIAMETER_BINS] : [height, heightBy, HEIGHT_BINS];
    addToHistogram(overall, r.bucket, r.n);
    addToHistogram((by[r.bits] ??= emptyHistogram(spec)), r.bucket, r.n);
  }
  const quart = (a: number[] | null) => ({ q1Nm: a?.[0] ?? null, medianNm: a?.[1] ?? null, q3Nm: a?.[2] ?? null });
  const fields: FieldBreakdown[] = f.fields.map((x) => ({
    ...x,
    measured: f.panel.map((c) => markerCell(x.fieldId, c.channelIndex).measured),
    positives: f.panel.map((c) => markerCell(x.fieldId, c.channelIndex).positive),
  }));
  return {
    sample: f.sample,
    source: f.source,
    release: f.release ? { id: f.release.id, version: f.release.version, releasedAt: f.release.releasedAt } : null,
    panel: f.panel,
    // every link run of the selection belongs to one of these fields (they are the sample's, with a run in it)
    fieldsAnalysed: f.fields.length,
    vesicles: f.fields.reduce((t, x) => t + x.vesicles, 0),
    phenotyped,
    markers,
    phenotypes,
    diameter: { ...quart(f.quartiles.diameterNm), histogram: diameter, byPhenotype: diameterBy },
    height: { ...quart(f.quartiles.heightNm), histogram: height, byPhenotype: heightBy },
    fields,
  };
}
