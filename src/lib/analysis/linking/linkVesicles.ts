import KDBush from 'kdbush';
import type { Point, Raster } from '../types';
import type { FluorescenceSpot } from '../fluorescence/types';
import { aperturePhotometry } from '../fluorescence/aperturePhotometry';
import { estimateMarkerAmplitudes } from './estimateMarkerAmplitudes';
import { callMarkerAmplitudes } from './callMarkerAmplitudes';
import type { CameraModel, MarkerCallRule } from './types';

/** Options of {@link linkVesicles}. */
export interface LinkVesiclesOptions {
  /** PSF standard deviation per marker (px). Required for every marker in `rastersPerChannel`. */
  sigmaPxByMarker: Readonly<Record<string, number>>;
  /**
   * How each marker is called (camera noise, control, manual; see {@link MarkerCallRule}). A marker without a rule is
   * called against its entry of thresholdCountsByMarker (the manual rule).
   * @default none
   */
  ruleByMarker?: Readonly<Record<string, MarkerCallRule>>;
  /**
   * Positivity threshold per marker, in the unit of `positivityMeasure` (counts), for markers without a rule.
   * Every marker needs a rule or a threshold.
   * @default none
   */
  thresholdCountsByMarker?: Readonly<Record<string, number>>;
  /** Camera noise model of the frames (weighted fit and model standard errors). @default none (residual-based SE) */
  camera?: CameraModel;
  /** Camera noise model per marker (a frame's own estimate); overrides `camera` for the markers it names. @default none */
  cameraByMarker?: Readonly<Record<string, CameraModel>>;
  /**
   * Light sources per marker that may lie near vesicles, such as detected spots (dim ones included): each one farther
   * than ownColumnMinDistancePx from every vesicle gets its own PSF column in the joint fit, so a free dye spot or
   * debris next to a vesicle keeps its own light. Spots closer than that are taken as the vesicle's own light.
   * @default spotsPerChannel
   */
  sourceSpotsByMarker?: Readonly<Record<string, readonly Point[]>>;
  /**
   * A source spot closer than this to a vesicle is that vesicle's light and gets no column (px). 1.5σ stays above the
   * mapping error of a registered vesicle (tens of nm, a fraction of σ) and below the FWHM (2.35σ) of a neighbour.
   * @default 1.5·sigmaPx of the channel
   */
  ownColumnMinDistancePx?: number;
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
  /** amplitudeCounts / amplitudeStdErrCounts, the same as amplitudeSnr (dimensionless). */
  readonly z: number | null;
  /** z calibrated by the frame's null (median, MAD at empty places); N(0, 1) where nothing is. */
  readonly zCalibrated: number | null;
  /** One-sided p-value of zCalibrated and its Benjamini–Hochberg q within the frame (this marker). */
  readonly pValue: number | null;
  readonly qValue: number | null;
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
  /** Vesicles inside each marker's frame, the denominator of positiveByMarker (count). */
  readonly nbMeasuredByMarker: Readonly<Record<string, number>>;
  /** PSF columns given to spots away from every vesicle (within 6σ of one), per marker (count). */
  readonly nbOtherSpotSourcesByMarker: Readonly<Record<string, number>>;
  /** Detected spots with no vesicle within the match radius, per marker (possible debris, free dye or missed EVs). */
  readonly unmatchedSpotsByMarker: Readonly<Record<string, number>>;
}

/**
 * Links AFM-detected vesicles (already mapped into fluorescence pixels) to every marker channel: aperture
 * photometry with SNR (reported), joint NNLS amplitude fitted together with every other emitter nearby (beads and
 * spots away from the vesicles), its SE under the camera model, z, p and q ({@link callMarkerAmplitudes}), the call
 * under the marker's rule and a phenotype string. Vesicles mapped outside a frame are "not measured" there
 * (positive null), flagged, not dropped, and left out of that marker's denominator (nbMeasuredByMarker).
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
  const {
    sigmaPxByMarker, thresholdCountsByMarker = {}, ruleByMarker = {}, camera, cameraByMarker = {}, otherSourcesPx = [], positivityMeasure = 'jointAmplitude',
    spotMatchRadiusPx, sourceSpotsByMarker, ownColumnMinDistancePx,
  } = options;
  const markers = Object.keys(rastersPerChannel);
  for (const marker of markers) {
    if (!(sigmaPxByMarker[marker] > 0)) throw new RangeError(`sigmaPxByMarker.${marker} must be a positive number`);
    if (!ruleByMarker[marker] && !Number.isFinite(thresholdCountsByMarker[marker])) {
      throw new RangeError(`thresholdCountsByMarker.${marker} must be a finite number when the marker has no rule`);
    }
  }
  const n = vesiclesFl.length;
  const perMarker: Record<string, ChannelCall[]> = {};
  const unmatchedSpotsByMarker: Record<string, number> = {};
  const positiveByMarker: Record<string, number> = {};
  const nbMeasuredByMarker: Record<string, number> = {};
  const nbOtherSpotSourcesByMarker: Record<string, number> = {};

  for (const marker of markers) {
    const raster = rastersPerChannel[marker];
    const sigmaPx = sigmaPxByMarker[marker];
    const rule: MarkerCallRule = ruleByMarker[marker] ?? { rule: 'manual', thresholdCounts: thresholdCountsByMarker[marker] };
    const matchPx = spotMatchRadiusPx ?? 2 * sigmaPx;
    const spots = spotsPerChannel[marker] ?? [];
    const vesicleIndex = new KDBush(Math.max(1, n));
    for (const v of vesiclesFl) vesicleIndex.add(v.x, v.y);
    if (n === 0) vesicleIndex.add(-1e9, -1e9);
    vesicleIndex.finish();
    // every emitter away from the vesicles gets its own column; the first n amplitudes are the vesicles'
    const ownPx = ownColumnMinDistancePx ?? 1.5 * sigmaPx;
    // spots further than 6σ from every vesicle fall in other neighbourhoods of the fit and are left out
    const spotSources = (sourceSpotsByMarker?.[marker] ?? spots)
      .filter((s) => vesicleIndex.within(s.x, s.y, ownPx).filter((i) => i < n).length === 0)
      .filter((s) => vesicleIndex.within(s.x, s.y, 6 * sigmaPx).filter((i) => i < n).length > 0)
      .map((s) => ({ x: s.x, y: s.y }));
    nbOtherSpotSourcesByMarker[marker] = spotSources.length;
    const sources = [...otherSourcesPx, ...spotSources];
    const fitted = estimateMarkerAmplitudes(raster, sources.length ? [...vesiclesFl, ...sources] : vesiclesFl, { sigmaPx, camera: cameraByMarker[marker] ?? camera, nbQueried: n }).amplitudes;
    const joint = fitted.slice(0, n);
    const tests = callMarkerAmplitudes(joint, rule);

    // nearest spot per vesicle, and spots with no vesicle
    const spotIndex = new KDBush(Math.max(1, spots.length));
    for (const s of spots) spotIndex.add(s.x, s.y);
    if (spots.length === 0) spotIndex.add(-1e9, -1e9);
    spotIndex.finish();
    unmatchedSpotsByMarker[marker] = spots.filter(
      (s) => vesicleIndex.within(s.x, s.y, matchPx).filter((i) => i < n).length === 0,
    ).length;

    let nbPositive = 0;
    let nbMeasured = 0;
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
          amplitudeStdErrCounts: null, amplitudeSnr: null, z: null, zCalibrated: null, pValue: null, qValue: null,
          spotIndex: nearest, spotDistancePx: nearestD, positive: null,
        };
      }
      nbMeasured++;
      const ap = aperturePhotometry(raster, v, { sigmaPx });
      const positive = positivityMeasure === 'aperture' && rule.rule === 'manual' ? ap.netCounts > rule.thresholdCounts : tests[i].positive === true;
      if (positive) nbPositive++;
      return {
        apertureCounts: ap.netCounts,
        apertureSnr: ap.snr,
        apertureLeavesFrame: ap.leavesFrame,
        amplitudeCounts: joint[i].amplitudeCounts,
        unconstrainedAmplitudeCounts: joint[i].unconstrainedAmplitudeCounts,
        amplitudeStdErrCounts: joint[i].stdErrCounts,
        amplitudeSnr: joint[i].snr,
        z: tests[i].z,
        zCalibrated: tests[i].zCalibrated,
        pValue: tests[i].pValue,
        qValue: tests[i].qValue,
        spotIndex: nearest,
        spotDistancePx: nearestD,
        positive,
      };
    });
    positiveByMarker[marker] = nbPositive;
    nbMeasuredByMarker[marker] = nbMeasured;
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
    nbMeasuredByMarker,
    nbOtherSpotSourcesByMarker,
    unmatchedSpotsByMarker,
  };
}
