import KDBush from 'kdbush';
import type { Point, Raster } from '../types';
import type { FluorescenceSpot } from '../fluorescence/types';
import { aperturePhotometry } from '../fluorescence/aperturePhotometry';
import { estimateMarkerAmplitudes } from './estimateMarkerAmplitudes';

/** Options of {@link linkVesicles}. */
export interface LinkVesiclesOptions {
  /** PSF standard deviation per marker (px). Required for every marker in `rastersPerChannel`. */
  sigmaPxByMarker: Readonly<Record<string, number>>;
  /** Positivity threshold per marker, in the unit of `positivityMeasure` (counts). Required for every marker. */
  thresholdCountsByMarker: Readonly<Record<string, number>>;
  /**
   * Which intensity is compared with the threshold. 'jointAmplitude': the NNLS amplitude of the vesicle's PSF fitted
   * jointly with its neighbours (total counts of that PSF), so light from a neighbour closer than the PSF is not
   * counted; thresholds from {@link backgroundAmplitudeThreshold} or control vesicles' amplitudes. 'aperture': net
   * aperture counts, which also collect a close neighbour's light; thresholds from {@link backgroundApertureThreshold}.
   * @default 'jointAmplitude'
   */
  positivityMeasure?: 'aperture' | 'jointAmplitude';
  /**
   * Other light sources at known positions in the fluorescence frame (px), such as fiducial beads: each gets a
   * PSF column in the joint fit, so a bright bead next to a vesicle does not lend it light. Not reported.
   * @default none
   */
  otherSourcesPx?: readonly Point[];
  /**
   * Largest vesicle–spot distance that counts as a match (px).
   * @default 2·sigmaPx of the channel
   */
  spotMatchRadiusPx?: number;
}

/** One vesicle's measurement in one channel; null fields when the vesicle is outside that frame. */
export interface ChannelCall {
  /** Net aperture counts (counts); reported, compared with the threshold only when positivityMeasure is 'aperture'. */
  readonly apertureCounts: number | null;
  readonly apertureSnr: number | null;
  /** True when the aperture or its annulus reached outside the frame. */
  readonly apertureLeavesFrame: boolean;
  /** Joint NNLS amplitude (total counts of this vesicle's PSF); compared with the threshold by default. */
  readonly amplitudeCounts: number | null;
  /** Unconstrained least-squares amplitude (counts, may be < 0); for control-based thresholds. */
  readonly unconstrainedAmplitudeCounts: number | null;
  readonly amplitudeStdErrCounts: number | null;
  readonly amplitudeSnr: number | null;
  /** Index into that channel's spot list of the nearest spot within the match radius, else null. */
  readonly spotIndex: number | null;
  readonly spotDistancePx: number | null;
  /** Marker call; null when the vesicle is outside this frame. */
  readonly positive: boolean | null;
}

/** One vesicle's calls. */
export interface VesicleLink {
  readonly index: number;
  /** True when the vesicle maps outside at least one channel's frame (it is kept, not dropped). */
  readonly outOfFrame: boolean;
  readonly channels: Readonly<Record<string, ChannelCall>>;
  /** e.g. "CD9+ CD63- CD81+"; "CD63?" where the vesicle is outside that frame. Channel order of rastersPerChannel. */
  readonly phenotype: string;
  readonly nbPositive: number;
}

/** Result of {@link linkVesicles}. */
export interface LinkVesiclesResult {
  readonly vesicles: VesicleLink[];
  readonly markers: string[];
  readonly nbVesicles: number;
  readonly nbOutOfFrame: number;
  /** In-frame everywhere and negative for every marker. */
  readonly nbVesiclesWithoutMarker: number;
  readonly positiveByMarker: Readonly<Record<string, number>>;
  /** Detected spots with no vesicle within the match radius, per marker (possible debris, free dye or missed EVs). */
  readonly unmatchedSpotsByMarker: Readonly<Record<string, number>>;
}

/**
 * Links AFM-detected vesicles (already mapped into fluorescence pixels) to every marker channel: aperture
 * photometry with SNR (reported), joint NNLS amplitude, nearest detected spot, a positivity call of the joint
 * amplitude (by default) against the marker's threshold and a phenotype string. Vesicles mapped outside a frame are flagged, not dropped.
 *
 * @param vesiclesFl - vesicle centres in fluorescence pixels (px); not modified
 * @param spotsPerChannel - detected spots per marker (px); not modified; a missing marker means no spots
 * @param rastersPerChannel - fluorescence frame per marker (counts); its key order sets the phenotype order
 * @param options - see {@link LinkVesiclesOptions}
 * @returns per-vesicle calls and counts
 * @throws RangeError when a marker lacks a sigma or a threshold
 */
export function linkVesicles(
  vesiclesFl: readonly Point[],
  spotsPerChannel: Readonly<Record<string, readonly FluorescenceSpot[]>>,
  rastersPerChannel: Readonly<Record<string, Raster>>,
  options: LinkVesiclesOptions,
): LinkVesiclesResult {
  const { sigmaPxByMarker, thresholdCountsByMarker, otherSourcesPx = [], positivityMeasure = 'jointAmplitude', spotMatchRadiusPx } = options;
  const markers = Object.keys(rastersPerChannel);
  for (const marker of markers) {
    if (!(sigmaPxByMarker[marker] > 0)) throw new RangeError(`sigmaPxByMarker.${marker} must be a positive number`);
    if (!Number.isFinite(thresholdCountsByMarker[marker])) {
      throw new RangeError(`thresholdCountsByMarker.${marker} must be a finite number`);
    }
  }
  const n = vesiclesFl.length;
  const perMarker: Record<string, ChannelCall[]> = {};
  const unmatchedSpotsByMarker: Record<string, number> = {};
  const positiveByMarker: Record<string, number> = {};

  for (const marker of markers) {
    const raster = rastersPerChannel[marker];
    const sigmaPx = sigmaPxByMarker[marker];
    const threshold = thresholdCountsByMarker[marker];
    const matchPx = spotMatchRadiusPx ?? 2 * sigmaPx;
    const spots = spotsPerChannel[marker] ?? [];
    // the first n amplitudes are the vesicles'; the other sources only take their own light
    const joint = estimateMarkerAmplitudes(raster, otherSourcesPx.length ? [...vesiclesFl, ...otherSourcesPx] : vesiclesFl, { sigmaPx }).amplitudes;

    // nearest spot per vesicle, and spots with no vesicle
    const spotIndex = new KDBush(Math.max(1, spots.length));
    for (const s of spots) spotIndex.add(s.x, s.y);
    if (spots.length === 0) spotIndex.add(-1e9, -1e9);
    spotIndex.finish();
    const vesicleIndex = new KDBush(Math.max(1, n));
    for (const v of vesiclesFl) vesicleIndex.add(v.x, v.y);
    if (n === 0) vesicleIndex.add(-1e9, -1e9);
    vesicleIndex.finish();
    unmatchedSpotsByMarker[marker] = spots.filter(
      (s) => vesicleIndex.within(s.x, s.y, matchPx).filter((i) => i < n).length === 0,
    ).length;

    let nbPositive = 0;
    perMarker[marker] = vesiclesFl.map((v, i) => {
      let nearest: number | null = null;
      let nearestD: number | null = null;
      for (const j of spotIndex.within(v.x, v.y, matchPx)) {
        if (j >= spots.length) continue;
        const d = Math.hypot(spots[j].x - v.x, spots[j].y - v.y);
        if (nearestD === null || d < nearestD) {
          nearestD = d;
          nearest = j;
        }
      }
      if (joint[i].outOfFrame) {
        return {
          apertureCounts: null, apertureSnr: null, apertureLeavesFrame: true, amplitudeCounts: null, unconstrainedAmplitudeCounts: null,
          amplitudeStdErrCounts: null, amplitudeSnr: null, spotIndex: nearest, spotDistancePx: nearestD, positive: null,
        };
      }
      const ap = aperturePhotometry(raster, v, { sigmaPx });
      const measure = positivityMeasure === 'aperture' ? ap.netCounts : joint[i].amplitudeCounts;
      const positive = measure > threshold;
      if (positive) nbPositive++;
      return {
        apertureCounts: ap.netCounts,
        apertureSnr: ap.snr,
        apertureLeavesFrame: ap.leavesFrame,
        amplitudeCounts: joint[i].amplitudeCounts,
        unconstrainedAmplitudeCounts: joint[i].unconstrainedAmplitudeCounts,
        amplitudeStdErrCounts: joint[i].stdErrCounts,
        amplitudeSnr: joint[i].snr,
        spotIndex: nearest,
        spotDistancePx: nearestD,
        positive,
      };
    });
    positiveByMarker[marker] = nbPositive;
  }

  // phenotypes
  const vesicles: VesicleLink[] = vesiclesFl.map((_, i) => {
    const channels: Record<string, ChannelCall> = {};
    let outOfFrame = false;
    let nbPositive = 0;
    const parts: string[] = [];
    for (const marker of markers) {
      const call = perMarker[marker][i];
      channels[marker] = call;
      if (call.positive === null) outOfFrame = true;
      if (call.positive) nbPositive++;
      parts.push(`${marker}${call.positive === null ? '?' : call.positive ? '+' : '-'}`);
    }
    return { index: i, outOfFrame, channels, phenotype: parts.join(' '), nbPositive };
  });
  return {
    vesicles,
    markers,
    nbVesicles: n,
    nbOutOfFrame: vesicles.filter((v) => v.outOfFrame).length,
    nbVesiclesWithoutMarker: vesicles.filter((v) => !v.outOfFrame && v.nbPositive === 0).length,
    positiveByMarker,
    unmatchedSpotsByMarker,
  };
}
