import KDBush from 'kdbush';
import { AnalysisError } from '../errors';
import { correctBackground, detectSpots, psfSigmaPx, type FluorescenceSpot } from '../fluorescence';
import {
  applyAffine, decomposeAffine, describeAffine, evaluateRegistration, findPairsRansac, invertAffine, residuals, type FiducialPair,
} from '../geometry';
import { detectVesicles, levelHeightMap, measureVesicle, selectThreshold } from '../heightmap';
import type { MeasureVesicleResult } from '../heightmap/types';
import {
  calibrateNullZ, chanceColocalisation, DEFAULT_Z_CRITICAL, describeMarkerCallRule, estimateCameraModel,
  type EstimateCameraModelResult, type MarkerCallRule,
} from '../linking';
import type { Point, Raster } from '../types';
import { mergeSpots } from './mergeSpots';
import { linkPerChannel } from './linkPerChannel';
import { mapPerChannel } from './mapPerChannel';
import { refineFiducialPairs } from './refineFiducialPairs';
import { separateBeads } from './separateBeads';
import type {
  AnalyzeFieldInput,
  AnalyzeFieldOptions,
  AnalyzeFieldResult,
  FieldChannelSummary,
  FieldRegistration,
  SavedRegistration,
  VesicleMarkerCall,
  VesicleRecord,
} from './types';

/**
 * Analyses one correlative field end to end: level the height map, detect and measure vesicles and fiducial
 * candidates, detect spots in every fluorescence channel, register AFM to fluorescence (a saved transform as is,
 * refined fiducial picks, or automatic pairing of AFM candidates with spots), take the beads out of the vesicles
 * (taller than the field's vesicles, under a fiducial pick, or bright in every channel; {@link separateBeads}),
 * refine the transform and PSF width of each channel on the beads, map every vesicle into each channel through its
 * own transform, measure each marker in frames without the beads' light (aperture photometry and SNR, reported;
 * joint NNLS amplitude of each vesicle's PSF
 * with its neighbours, beads and every spot away from the vesicles, weighted by the camera noise model; its SE, z,
 * p and q; nearest spot), call it under the marker's rule (a hand-set threshold; else a control threshold; else
 * calibrated z above z_crit, the null measured at empty places that avoid every spot, dim ones included), estimate
 * chance colocalisation at shifted positions, and gather per-vesicle records and field counts (vesicles outside a
 * frame leave that marker's denominator; phenotypes count only vesicles measured in every channel). Pure and
 * deterministic.
 *
 * @param input - rasters, pixel sizes (nm/px), optics, optional fiducials and thresholds; not modified
 * @param options - see {@link AnalyzeFieldOptions}
 * @returns per-vesicle records, a field summary and the intermediate detections
 * @throws AnalysisError `no_channels`, `duplicate_marker`, `channel_size_mismatch`, `unknown_marker_threshold`;
 *   the codes of levelling and thresholds (`insufficient_background`, ...), of registration (`too_few_fiducials`,
 *   `duplicate_fiducials`, `degenerate_fiducials`, `no_consistent_pairing`), `invalid_saved_transform` and
 *   `too_few_background_apertures`
 * @throws RangeError for non-positive pixel sizes, NA or wavelengths
 */
export function analyzeField(input: AnalyzeFieldInput, options: AnalyzeFieldOptions = {}): AnalyzeFieldResult {
  const {
    thresholdNm, level = {}, tipRadiusNm = 0, spotThresholdK = 5, snapRadiusNm = 300,
    mergeSpotsPx = 1.5, pairingToleranceFlPx = 2, seed = 1, onProgress = () => undefined, dimSpotThresholdK = 3,
    chanceShifts = { minUm: 2, maxUm: 4, nbShifts: 5 },
  } = options;
  const {
    heightNm, afmPixelNm, channels, flPixelNm, numericalAperture, fiducialPairs, savedRegistration, thresholdCountsByMarker = {},
    controlThresholdByMarker = {}, camera: givenCamera = {},
  } = input;
  const cameraOffsetCounts = options.cameraOffsetCounts ?? givenCamera.offsetCounts ?? 0;
  validateInput(input);
  // z_crit per marker (calibrated z of the camera-noise test); default 2.58 = one-sided p < 0.005
  const positivityKByMarker = options.positivityKByMarker ?? {};
  for (const [m, k] of Object.entries(positivityKByMarker)) {
    if (!(k > 0) || !Number.isFinite(k)) throw new RangeError(`positivityKByMarker.${m} must be a positive finite number, got ${k}`);
  }
  const markers = channels.map((c) => c.marker);
  const sigmaPxByMarker: Record<string, number> = {};
  for (const c of channels) sigmaPxByMarker[c.marker] = psfSigmaPx(c.emissionNm, numericalAperture, flPixelNm);

  // level
  onProgress('level', 0);
  // the detection an analyst reviewed, when given, is used as is: linking releases exactly those vesicles
  const reviewed = input.reviewedDetection;
  const levelling = reviewed?.levelling ?? levelHeightMap(heightNm, level);
  onProgress('level', 1);

  // detect
  onProgress('detect', 0);
  const threshold = reviewed?.threshold ?? selectThreshold(
    levelling.levelled,
    thresholdNm === undefined
      ? { method: 'robust', k: 3, backgroundMask: levelling.backgroundMask }
      : { method: 'manual', thresholdNm },
  );
  const detection = reviewed?.detection ?? detectVesicles(levelling.levelled, { thresholdNm: threshold.thresholdNm });
  onProgress('detect', 1);

  // measure
  onProgress('measure', 0);
  const measureOptions = { tipRadiusNm, thresholdNm: Math.max(0, threshold.thresholdNm) };
  const measure = (r: (typeof detection.vesicles)[number]) =>
    measureVesicle(levelling.levelled, detection.labels, r, afmPixelNm, measureOptions);
  const detectedVesicles = reviewed ? [...reviewed.vesicles] : detection.vesicles.map(measure);
  onProgress('measure', 0.9);
  const detectedTall = reviewed ? [...reviewed.fiducialCandidates] : detection.fiducialCandidates.map(measure);
  onProgress('measure', 1);

  // spots
  onProgress('spots', 0);
  const spotsByMarker: Record<string, FluorescenceSpot[]> = {};
  const correctedByMarker: Record<string, ReturnType<typeof correctBackground>> = {};
  channels.forEach((c, i) => {
    const bg = correctBackground(c.raster, { cameraOffsetCounts });
    correctedByMarker[c.marker] = bg;
    spotsByMarker[c.marker] = detectSpots(bg.corrected, {
      sigmaPx: sigmaPxByMarker[c.marker], thresholdK: spotThresholdK, background: bg.background, pixelSigmaCounts: bg.summary.residualSigmaCounts,
    }).spots;
    onProgress('spots', (i + 1) / channels.length);
  });
  const spotsPerChannel = markers.map((m) => spotsByMarker[m]);

  // register
  onProgress('register', 0);
  const commonRegistration = savedRegistration
    ? registerFromSaved(savedRegistration, { afmPixelNm, flPixelNm })
    : fiducialPairs
    ? registerFromPicks(fiducialPairs, detectedVesicles, detectedTall, detection.labels, heightNm.width, spotsPerChannel, {
        afmPixelNm, flPixelNm, snapRadiusNm,
      })
    : registerAutomatically(detectedVesicles, detectedTall, spotsPerChannel, {
        afmPixelNm, flPixelNm, mergeSpotsPx, pairingToleranceFlPx, seed,
      });
  // beads are never vesicles (height, fiducial picks, light in every channel); each channel gets its own transform
  const beadSplit = separateBeads({
    objects: detectedVesicles, tallObjects: detectedTall, labels: detection.labels, width: heightNm.width,
    picksAfmPx: (savedRegistration?.pairs ?? fiducialPairs ?? []).map((p) => p.afm), flFromAfm: commonRegistration.flFromAfm,
    channels: channels.map((c) => ({ marker: c.marker, raster: c.raster, sigmaPx: sigmaPxByMarker[c.marker] })), afmPixelNm, flPixelNm,
  }, { pickRadiusNm: snapRadiusNm });
  const vesicles = beadSplit.vesicles;
  const fiducialCandidates = beadSplit.beadObjects;
  const registration: FieldRegistration = {
    ...commonRegistration, channels: beadSplit.channels, warnings: [...commonRegistration.warnings, ...beadSplit.notes],
  };
  const vesiclesFl = vesicles.map((v) => applyAffine(registration.flFromAfm, v.centroidPx));
  const fiducialsFl = fiducialCandidates.map((f) => applyAffine(registration.flFromAfm, f.centroidPx));
  const vesiclesFlByMarker = mapPerChannel(vesicles, beadSplit.channels);
  // from here on each channel's PSF width is the one measured on its beads, where there were enough
  if (options.psfFromBeads ?? true) {
    for (const [m, c] of Object.entries(beadSplit.channels)) if (c.psfSigmaPx !== null) sigmaPxByMarker[m] = c.psfSigmaPx;
  }
  const fiducialsFlByMarker = mapPerChannel(fiducialCandidates, beadSplit.channels);
  onProgress('register', 1);

  // link: per frame a camera model (given, else estimated), dim spots, the null of z at empty places that avoid every
  // detected spot, the rule (hand-set > control > camera noise); then one joint fit of vesicles, beads and spots
  onProgress('link', 0);
  const rastersPerChannel: Record<string, Raster> = {};
  // vesicles are measured in frames without the beads' light (their halo is not the fitted PSF)
  for (const c of channels) rastersPerChannel[c.marker] = beadSplit.rastersWithoutBeads[c.marker];
  const cameraByMarker: Record<string, EstimateCameraModelResult> = {};
  const dimSpotsByMarker: Record<string, Point[]> = {};
  const ruleByMarker: Record<string, MarkerCallRule> = {};
  const nullByMarker: Record<string, ReturnType<typeof calibrateNullZ>> = {};
  channels.forEach((c, i) => {
    const m = c.marker;
    const sigmaPx = sigmaPxByMarker[m];
    cameraByMarker[m] = estimateCameraModel(c.raster, givenCamera);
    const bg = correctedByMarker[m];
    // dim spots: those of a lower threshold not already detected (one column per emitter, never two)
    const detected = nearAny(spotsByMarker[m], 1.5);
    dimSpotsByMarker[m] = detectSpots(bg.corrected, {
      sigmaPx, thresholdK: dimSpotThresholdK, background: bg.background, refine: 'centroid', pixelSigmaCounts: bg.summary.residualSigmaCounts,
    })
      .spots.filter((s) => !detected(s)).map((s) => ({ x: s.x, y: s.y }));
    const avoid = [...vesiclesFl, ...fiducialsFl, ...spotsByMarker[m], ...dimSpotsByMarker[m]];
    const nullZ = calibrateNullZ(c.raster, avoid, {
      sigmaPx, camera: cameraByMarker[m].camera, sourcesPx: [...fiducialsFl, ...spotsByMarker[m], ...dimSpotsByMarker[m]],
    });
    nullByMarker[m] = nullZ;
    const nullCalibration = { medianZ: nullZ.medianZ, madZ: nullZ.madZ, nbPlaces: nullZ.nbPlaces, calibrated: nullZ.calibrated };
    const zCritical = positivityKByMarker[m] ?? DEFAULT_Z_CRITICAL;
    const control = controlThresholdByMarker[m];
    ruleByMarker[m] = thresholdCountsByMarker[m] !== undefined
      ? { rule: 'manual', thresholdCounts: thresholdCountsByMarker[m], nullCalibration }
      : control
      ? { rule: 'control', zCritical, nullCalibration, controlKind: control.kind, thresholdCounts: control.thresholdCounts }
      : { rule: 'camera_noise', zCritical, nullCalibration };
    onProgress('link', (0.4 * (i + 1)) / channels.length);
  });
  const links = linkPerChannel(vesiclesFlByMarker, spotsByMarker, rastersPerChannel, {
    sigmaPxByMarker, ruleByMarker, positivityMeasure: 'jointAmplitude', otherSourcesPx: fiducialsFl, otherSourcesPxByMarker: fiducialsFlByMarker,
    cameraByMarker: Object.fromEntries(markers.map((m) => [m, cameraByMarker[m].camera])),
    sourceSpotsByMarker: Object.fromEntries(markers.map((m) => [m, [...dimSpotsByMarker[m], ...spotsByMarker[m]]])),
  });
  onProgress('link', 0.7);
  // chance colocalisation: the measured vesicle set moved by a few microns, called like vesicles
  const chanceByMarker: Record<string, ReturnType<typeof chanceColocalisation>> = {};
  for (const m of markers) {
    const measured = vesiclesFlByMarker[m].filter((_, i) => links.vesicles[i].channels[m].positive !== null);
    chanceByMarker[m] = chanceColocalisation(rastersPerChannel[m], measured, [...dimSpotsByMarker[m], ...spotsByMarker[m]], {
      sigmaPx: sigmaPxByMarker[m], camera: cameraByMarker[m].camera, rule: ruleByMarker[m], fixedSourcesPx: fiducialsFlByMarker[m],
      minShiftPx: (1000 * chanceShifts.minUm) / flPixelNm, maxShiftPx: (1000 * chanceShifts.maxUm) / flPixelNm, nbShifts: chanceShifts.nbShifts, seed,
    });
  }
  onProgress('link', 1);

  // summarise
  onProgress('summarise', 0);
  const records: VesicleRecord[] = vesicles.map((v, i) => {
    const link = links.vesicles[i];
    const calls: Record<string, VesicleMarkerCall> = {};
    for (const m of markers) {
      const c = link.channels[m];
      calls[m] = {
        intensityCounts: c.apertureCounts, intensitySnr: c.apertureSnr, amplitudeCounts: c.amplitudeCounts,
        unconstrainedAmplitudeCounts: c.unconstrainedAmplitudeCounts, amplitudeSnr: c.amplitudeSnr,
        ...(photonsKnown(cameraByMarker[m]) && c.amplitudeCounts !== null
          ? { amplitudePhotons: c.amplitudeCounts / cameraByMarker[m].camera.gainCountsPerPhoton } : {}),
        amplitudeSeCounts: c.amplitudeStdErrCounts, z: c.z, zCalibrated: c.zCalibrated, pValue: c.pValue, qValue: c.qValue,
        spotDistancePx: c.spotDistancePx, positive: c.positive,
      };
    }
    return {
      index: i,
      xAfmPx: v.centroidPx.x,
      yAfmPx: v.centroidPx.y,
      xFlPx: vesiclesFl[i].x,
      yFlPx: vesiclesFl[i].y,
      heightNm: v.apexHeightNm,
      footprintDiameterNm: v.footprintDiameterNm,
      volumeNm3: v.volumeNm3,
      areaNm2: v.projectedAreaNm2,
      circularity: v.circularity,
      meanHeightNm: v.meanHeightNm,
      cap: v.cap ? {
        baseRadiusNm: v.cap.baseRadiusNm, heightNm: v.cap.heightNm, contactAngleDeg: v.cap.contactAngleDeg,
        volumeNm3: v.cap.volumeNm3, volumeEquivalentDiameterNm: v.cap.volumeEquivalentDiameterNm,
      } : null,
      capFlag: v.capFlag,
      split: v.split,
      outOfFrame: link.outOfFrame,
      phenotype: link.phenotype,
      markers: calls,
    };
  });
  // phenotypes only over vesicles measured in every channel: a "?" is not a phenotype
  const phenotypeCounts: Record<string, number> = {};
  let nbMeasuredAllChannels = 0;
  for (const r of records) {
    if (r.outOfFrame) continue;
    nbMeasuredAllChannels++;
    phenotypeCounts[r.phenotype] = (phenotypeCounts[r.phenotype] ?? 0) + 1;
  }
  const channelSummaries: Record<string, FieldChannelSummary> = {};
  const spotsWithoutVesicleByMarker: Record<string, number> = {};
  for (const c of channels) {
    const sigma = sigmaPxByMarker[c.marker];
    const spots = spotsByMarker[c.marker];
    const nearVesicle = nearAny(vesiclesFl, 2 * sigma);
    const nearFiducial = nearAny(fiducialsFl, 2 * sigma);
    let withoutVesicle = 0;
    let onFiducial = 0;
    for (const s of spots) {
      if (nearVesicle(s)) continue;
      if (nearFiducial(s)) onFiducial++;
      else withoutVesicle++;
    }
    spotsWithoutVesicleByMarker[c.marker] = withoutVesicle;
    channelSummaries[c.marker] = {
      emissionNm: c.emissionNm,
      psfSigmaPx: sigma,
      nbSpots: spots.length,
      ...ruleSummary(ruleByMarker[c.marker], nullByMarker[c.marker], controlThresholdByMarker[c.marker]?.nbControls ?? null),
      thresholdMeasure: 'joint_amplitude',
      thresholdUnit: AMPLITUDE_UNIT,
      nbPositive: links.positiveByMarker[c.marker],
      camera: cameraByMarker[c.marker].camera,
      cameraSource: cameraByMarker[c.marker].source,
      cameraNote: cameraByMarker[c.marker].note,
      nbMeasured: links.nbMeasuredByMarker[c.marker],
      positiveFraction: links.nbMeasuredByMarker[c.marker] ? links.positiveByMarker[c.marker] / links.nbMeasuredByMarker[c.marker] : null,
      chancePositiveFraction: Number.isFinite(chanceByMarker[c.marker].chancePositiveFraction) ? chanceByMarker[c.marker].chancePositiveFraction : null,
      nbChancePositions: chanceByMarker[c.marker].nbPositions,
      nbOtherSources: links.nbOtherSpotSourcesByMarker[c.marker],
      nbSpotsWithoutVesicle: withoutVesicle,
      nbSpotsOnFiducials: onFiducial,
    };
  }
  onProgress('summarise', 1);
  return {
    records,
    summary: {
      afmPixelNm,
      flPixelNm,
      numericalAperture,
      markers,
      heightThresholdNm: threshold.thresholdNm,
      heightThresholdMethod: threshold.method,
      backgroundSigmaNm: levelling.backgroundSigmaNm,
      nbVesicles: vesicles.length,
      nbFiducialCandidates: fiducialCandidates.length,
      registration,
      channels: channelSummaries,
      positiveByMarker: { ...links.positiveByMarker },
      nbMeasuredByMarker: { ...links.nbMeasuredByMarker },
      phenotypeCounts,
      nbMeasuredAllChannels,
      nbOutOfFrame: links.nbOutOfFrame,
      spotsWithoutVesicleByMarker,
      nbVesiclesWithoutMarker: links.nbVesiclesWithoutMarker,
    },
    labels: detection.labels,
    vesicles,
    fiducialCandidates,
    spotsByMarker,
    fiducialsFl,
    beads: beadSplit.beads,
  };
}

/** Amplitudes convert to photons only when the gain was given or estimated from a given offset, not assumed. */
function photonsKnown(c: EstimateCameraModelResult): boolean {
  return c.source === 'given' || c.note.startsWith('gain ') && c.note.includes('estimated');
}

/**
 * The threshold fields of a channel summary under its rule. For the noise rules thresholdCounts is the amplitude a
 * lone vesicle on the typical background needs, (median + z_crit·MAD)·typical SE; each vesicle is called on its own
 * z, so one next to a bright neighbour (larger SE) needs more.
 */
function ruleSummary(rule: MarkerCallRule, nullZ: ReturnType<typeof calibrateNullZ>, nbControls: number | null) {
  const se = Number.isFinite(nullZ.medianSeCounts) ? nullZ.medianSeCounts : null;
  const base = {
    rule: rule.rule, ruleSentence: describeMarkerCallRule(rule, nbControls ?? undefined),
    nullMedianZ: nullZ.medianZ, nullMadZ: nullZ.madZ, nullCalibrated: nullZ.calibrated, typicalSeCounts: se,
    nbBackgroundApertures: nullZ.nbPlaces,
    backgroundMeanCounts: se === null ? null : nullZ.medianZ * se,
    backgroundSdCounts: se === null ? null : nullZ.madZ * se,
  };
  if (rule.rule === 'manual') {
    return { ...base, thresholdSource: 'given' as const, thresholdCounts: rule.thresholdCounts, zCritical: null, controlKind: null, nbControls: null };
  }
  const noise = se === null ? Number.NaN : (nullZ.medianZ + rule.zCritical * nullZ.madZ) * se;
  if (rule.rule === 'control') {
    return {
      ...base, thresholdSource: 'control' as const, thresholdCounts: Math.max(rule.thresholdCounts, Number.isFinite(noise) ? noise : -Infinity),
      zCritical: rule.zCritical, controlKind: rule.controlKind, nbControls,
    };
  }
  return { ...base, thresholdSource: 'camera_noise' as const, thresholdCounts: noise, zCritical: rule.zCritical, controlKind: null, nbControls: null };
}

/** The registration before the per-channel refinement from the beads. */
type CommonRegistration = Omit<FieldRegistration, 'channels'>;

/** The unit of joint amplitudes and their thresholds, in words for people. */
const AMPLITUDE_UNIT = 'counts (total counts of one vesicle\'s fitted PSF, integrated over the plane)';

function validateInput(input: AnalyzeFieldInput): void {
  const { channels, afmPixelNm, flPixelNm, numericalAperture, thresholdCountsByMarker = {} } = input;
  for (const [name, v] of [['afmPixelNm', afmPixelNm], ['flPixelNm', flPixelNm], ['numericalAperture', numericalAperture]] as const) {
    if (!(v > 0) || !Number.isFinite(v)) throw new RangeError(`${name} must be a positive finite number, got ${v}`);
  }
  if (channels.length === 0) throw new AnalysisError('no_channels', 'At least one fluorescence channel is needed.');
  const seen = new Set<string>();
  for (const c of channels) {
    if (seen.has(c.marker)) {
      throw new AnalysisError('duplicate_marker', `Marker "${c.marker}" is given twice; each channel needs its own marker name.`, { marker: c.marker });
    }
    seen.add(c.marker);
  }
  const { width, height } = channels[0].raster;
  for (const c of channels) {
    if (c.raster.width !== width || c.raster.height !== height) {
      throw new AnalysisError(
        'channel_size_mismatch',
        `Channel ${c.marker} is ${c.raster.width}×${c.raster.height} px but ${channels[0].marker} is ${width}×${height} px; ` +
          'all fluorescence channels of a field must be the same frame.',
        { marker: c.marker },
      );
    }
  }
  for (const [m, t] of Object.entries(input.controlThresholdByMarker ?? {})) {
    if (!seen.has(m)) {
      throw new AnalysisError('unknown_marker_threshold', `A control threshold is given for "${m}", which is not one of the markers (${[...seen].join(', ')}).`, { marker: m });
    }
    if (!Number.isFinite(t.thresholdCounts)) throw new RangeError(`controlThresholdByMarker.${m}.thresholdCounts must be finite, got ${t.thresholdCounts}`);
  }
  const { camera = {} } = input;
  if (camera.gainCountsPerPhoton !== undefined && !(camera.gainCountsPerPhoton > 0 && Number.isFinite(camera.gainCountsPerPhoton))) {
    throw new RangeError(`camera.gainCountsPerPhoton must be a positive number, got ${camera.gainCountsPerPhoton}`);
  }
  if (camera.readNoiseCounts !== undefined && !(camera.readNoiseCounts >= 0 && Number.isFinite(camera.readNoiseCounts))) {
    throw new RangeError(`camera.readNoiseCounts must be a number ≥ 0, got ${camera.readNoiseCounts}`);
  }
  if (camera.offsetCounts !== undefined && !Number.isFinite(camera.offsetCounts)) throw new RangeError(`camera.offsetCounts must be finite, got ${camera.offsetCounts}`);
  for (const [m, t] of Object.entries(thresholdCountsByMarker)) {
    if (!seen.has(m)) {
      throw new AnalysisError('unknown_marker_threshold', `A threshold is given for "${m}", which is not one of the markers (${[...seen].join(', ')}).`, { marker: m });
    }
    if (!Number.isFinite(t)) throw new RangeError(`thresholdCountsByMarker.${m} must be finite, got ${t}`);
  }
}

/** Predicate "a point of `points` lies within radiusPx". */
function nearAny(points: readonly Point[], radiusPx: number): (p: Point) => boolean {
  if (points.length === 0) return () => false;
  const index = new KDBush(points.length);
  for (const p of points) index.add(p.x, p.y);
  index.finish();
  return (p) => index.within(p.x, p.y, radiusPx).length > 0;
}

/**
 * A saved registration used as is: the vesicles are mapped with its transform, whatever a refit of its pairs would
 * give; the pairs only provide the residuals (FRE) and, fitted with the saved model, the TRE estimates and warnings.
 */
function registerFromSaved(saved: SavedRegistration, o: { afmPixelNm: number; flPixelNm: number }): CommonRegistration {
  const { flFromAfm, model, pairs } = saved;
  if (flFromAfm.length !== 6 || !flFromAfm.every(Number.isFinite)) {
    throw new AnalysisError('invalid_saved_transform', 'The saved registration has no valid transform (6 finite numbers); save the registration again.');
  }
  const evaluation = evaluateRegistration(pairs, { afmPixelNm: o.afmPixelNm, flPixelNm: o.flPixelNm, model });
  const res = residuals(pairs.map((p) => p.afm), pairs.map((p) => p.fl), flFromAfm, o.flPixelNm);
  return {
    source: 'saved',
    model,
    flFromAfm,
    afmFromFl: invertAffine(flFromAfm),
    description: describeAffine(flFromAfm),
    mirrored: decomposeAffine(flFromAfm).mirrored,
    pairs: pairs.map((p) => ({ afm: { ...p.afm }, fl: { ...p.fl } })),
    nbPairs: pairs.length,
    freNm: res.freNm,
    rmsResidualPx: res.rmsResidualPx,
    leaveOneOutTreRmsNm: evaluation.leaveOneOutTreRmsNm,
    predictedTreAtCentroidNm: evaluation.predictedTreAtCentroidNm,
    warnings: evaluation.warnings,
    refinement: null,
  };
}

function registerFromPicks(
  picks: readonly FiducialPair[],
  vesicles: readonly MeasureVesicleResult[],
  fiducialCandidates: readonly MeasureVesicleResult[],
  labels: Int32Array,
  width: number,
  spotsPerChannel: readonly (readonly Point[])[],
  o: { afmPixelNm: number; flPixelNm: number; snapRadiusNm: number },
): CommonRegistration {
  const centroidByLabel = new Map<number, Point>();
  for (const r of [...fiducialCandidates, ...vesicles]) centroidByLabel.set(r.label, r.centroidPx);
  const refinement = refineFiducialPairs(picks, {
    labels, width, centroidByLabel, spotsPerChannel,
    afmRadiusPx: o.snapRadiusNm / o.afmPixelNm, flRadiusPx: o.snapRadiusNm / o.flPixelNm,
    afmPixelNm: o.afmPixelNm, flPixelNm: o.flPixelNm,
  });
  return describe('fiducials', refinement.map((r) => r.refined), refinement, o);
}

function registerAutomatically(
  vesicles: readonly MeasureVesicleResult[],
  fiducialCandidates: readonly MeasureVesicleResult[],
  spotsPerChannel: readonly (readonly Point[])[],
  o: { afmPixelNm: number; flPixelNm: number; mergeSpotsPx: number; pairingToleranceFlPx: number; seed: number },
): CommonRegistration {
  // beads and vesicles in AFM against every spot (merged across channels) in fluorescence
  const afm = [...fiducialCandidates, ...vesicles].map((r) => r.centroidPx);
  const fl = mergeSpots(spotsPerChannel, o.mergeSpotsPx);
  const found = findPairsRansac(afm, fl, {
    afmPixelNm: o.afmPixelNm, flPixelNm: o.flPixelNm, inlierTolerancePx: o.pairingToleranceFlPx, seed: o.seed,
  });
  return describe('automatic', found.pairs.map((p) => ({ afm: p.afm, fl: p.fl })), null, o);
}

function describe(
  source: FieldRegistration['source'],
  pairs: FiducialPair[],
  refinement: FieldRegistration['refinement'],
  o: { afmPixelNm: number; flPixelNm: number },
): CommonRegistration {
  const evaluation = evaluateRegistration(pairs, { afmPixelNm: o.afmPixelNm, flPixelNm: o.flPixelNm });
  return {
    source,
    model: evaluation.model,
    flFromAfm: evaluation.flFromAfm,
    afmFromFl: invertAffine(evaluation.flFromAfm),
    description: evaluation.description,
    mirrored: evaluation.mirrored,
    pairs,
    nbPairs: pairs.length,
    freNm: evaluation.freNm,
    rmsResidualPx: evaluation.rmsResidualPx,
    leaveOneOutTreRmsNm: evaluation.leaveOneOutTreRmsNm,
    predictedTreAtCentroidNm: evaluation.predictedTreAtCentroidNm,
    warnings: evaluation.warnings,
    refinement,
  };
}
